"""Token operations: mint (the key is shown once), look up by key, revoke."""

from __future__ import annotations

import hashlib
import secrets
from datetime import timedelta

from django.utils import timezone

from labdb.api.models import ApiToken, TokenScope
from labdb.audit.models import Action
from labdb.audit.services import record_event

#: Visible characters kept in the clear; 6 bytes of the key's randomness, enough to tell
#: a user's tokens apart and far too few to help guess the rest (the key has 256 bits).
PREFIX_LENGTH = 8

#: A token's last-used time is written at most this often, so a busy script does not turn
#: every read into a database write.
LAST_USED_RESOLUTION = timedelta(minutes=1)


def hash_key(key: str) -> str:
    """sha256 hex digest of a token key; the only form in which keys are stored."""
    return hashlib.sha256(key.encode("utf-8")).hexdigest()


def mint_token(user, scope: str = TokenScope.READ, name: str = "") -> tuple[ApiToken, str]:
    """Create a token for ``user``; returns the stored row and the key (shown only now)."""
    if scope not in TokenScope.values:
        raise ValueError(f"unknown token scope {scope!r}; use one of {TokenScope.values}")
    key = secrets.token_urlsafe(32)
    token = ApiToken.objects.create(
        user=user,
        name=name.strip()[:80],
        scope=scope,
        prefix=key[:PREFIX_LENGTH],
        key_sha256=hash_key(key),
    )
    # The key itself never reaches the trail: scope, name and prefix identify the token.
    record_event(
        Action.CREATED,
        token,
        actor=user,
        summary=f"API token {token.prefix}… ({scope}) minted",
        changes={"scope": scope, "name": token.name, "prefix": token.prefix},
    )
    return token, key


def token_for_key(key: str) -> ApiToken | None:
    """The active token holding ``key`` (with its user), or None; records the use."""
    if not key or len(key) > 200:
        return None
    token = (
        ApiToken.objects.select_related("user")
        .filter(key_sha256=hash_key(key), revoked_at__isnull=True)
        .first()
    )
    if token is None or not token.user.is_active:
        return None
    now = timezone.now()
    if token.last_used_at is None or now - token.last_used_at >= LAST_USED_RESOLUTION:
        ApiToken.objects.filter(pk=token.pk).update(last_used_at=now)
        token.last_used_at = now
    return token


def revoke_token(token: ApiToken) -> bool:
    """Revoke ``token``; False when it was already revoked (revoking twice changes nothing)."""
    changed = ApiToken.objects.filter(pk=token.pk, revoked_at__isnull=True).update(
        revoked_at=timezone.now()
    )
    token.refresh_from_db(fields=["revoked_at"])
    if changed:
        record_event(
            Action.ARCHIVED,
            token,
            actor=token.user,
            summary=f"API token {token.prefix}… revoked",
            changes={"revoked_at": token.revoked_at.isoformat()},
        )
    return bool(changed)
