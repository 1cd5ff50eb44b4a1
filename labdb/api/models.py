"""Personal API tokens: scoped, stored as a sha256 hash, revocable."""

from __future__ import annotations

from django.conf import settings
from django.db import models


class TokenScope(models.TextChoices):
    READ = "read", "read (GET only)"
    WRITE = "write", "write (read, and post or change what your role allows)"


class ApiToken(models.Model):
    """A personal token for scripts. The key itself is never stored, only its sha256."""

    user = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="api_tokens"
    )
    name = models.CharField(max_length=80, blank=True)
    scope = models.CharField(max_length=8, choices=TokenScope.choices, default=TokenScope.READ)
    # The first characters of the key, shown on the tokens page so a user can tell keys apart.
    prefix = models.CharField(max_length=12)
    key_sha256 = models.CharField(max_length=64, unique=True)
    created_at = models.DateTimeField(auto_now_add=True)
    last_used_at = models.DateTimeField(null=True, blank=True)
    revoked_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["-created_at", "-id"]
        constraints = [
            models.CheckConstraint(
                condition=models.Q(scope__in=["read", "write"]), name="api_token_scope_known"
            ),
        ]

    def __str__(self) -> str:
        label = f" ({self.name})" if self.name else ""
        return f"{self.prefix}…{label} of {self.user}"

    @property
    def active(self) -> bool:
        return self.revoked_at is None

    @property
    def can_write(self) -> bool:
        return self.scope == TokenScope.WRITE
