"""One row per change of a lab record: who, what, when, and the fields that changed."""

from __future__ import annotations

from django.conf import settings
from django.db import models
from django.utils import timezone


class Action(models.TextChoices):
    CREATED = "created", "created"
    CHANGED = "changed", "changed"
    ARCHIVED = "archived", "archived"
    REVIEWED = "reviewed", "reviewed"
    DELETED = "deleted", "deleted"


class AuditImmutableError(Exception):
    """Raised when code tries to change a written audit event."""


class AuditEvent(models.Model):
    """An entry of the audit trail; written once, never changed (the trail is append-only)."""

    at = models.DateTimeField(default=timezone.now)
    actor = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    # Kept beside the key so the trail still names a user who was later deleted.
    actor_name = models.CharField(max_length=150, blank=True)
    action = models.CharField(max_length=12, choices=Action.choices)
    object_type = models.CharField(max_length=60, help_text="app_label.model, e.g. catalog.part")
    object_id = models.CharField(max_length=64)
    summary = models.CharField(max_length=300)
    changes = models.JSONField(
        default=dict, help_text="Field → value (created) or [old, new] (changed)."
    )
    via = models.CharField(
        max_length=8, blank=True, help_text="page, api, or empty for commands and background work"
    )

    class Meta:
        ordering = ["-at", "-id"]
        indexes = [
            models.Index(fields=["object_type", "object_id"], name="audit_object_idx"),
            models.Index(fields=["actor", "at"], name="audit_actor_idx"),
            models.Index(fields=["action", "at"], name="audit_action_idx"),
        ]

    def __str__(self) -> str:
        who = self.actor_name or "system"
        return f"{self.at:%Y-%m-%d %H:%M} {who} {self.action} {self.object_type} {self.object_id}"

    def save(self, *args, **kwargs):
        if self.pk is not None and not self._state.adding:
            raise AuditImmutableError("an audit event is never changed")
        super().save(*args, **kwargs)
