"""Roles are Django groups; each role includes the rights of the ones below it."""

from __future__ import annotations

VIEWER = "viewer"
MEMBER = "member"
CURATOR = "curator"

#: Lowest to highest; a user holds every role up to their highest group.
ROLES: tuple[str, ...] = (VIEWER, MEMBER, CURATOR)


def role_of(user) -> str | None:
    """The user's highest role, or None (anonymous or in no role group)."""
    if user is None or not user.is_authenticated or not user.is_active:
        return None
    if user.is_superuser:
        return CURATOR
    names = getattr(user, "_labdb_role_names", None)
    if names is None:
        names = set(user.groups.values_list("name", flat=True))
        user._labdb_role_names = names
    for role in reversed(ROLES):
        if role in names:
            return role
    return None


def has_role(user, role: str) -> bool:
    """True when ``user`` holds ``role`` or a higher one."""
    held = role_of(user)
    return held is not None and ROLES.index(held) >= ROLES.index(role)
