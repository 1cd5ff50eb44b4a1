"""Account operations: give a user a role."""

from __future__ import annotations

from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group

from labdb.accounts.roles import ROLES


def ensure_user(username: str, role: str, password: str | None = None, *, staff: bool = False):
    """Create or update ``username`` holding exactly ``role``; set the password when given."""
    if role not in ROLES:
        raise ValueError(f"unknown role {role!r}; use one of {ROLES}")
    user, _ = get_user_model().objects.get_or_create(username=username)
    if password is not None:
        user.set_password(password)
    user.is_staff = staff
    user.save()
    user.groups.set([Group.objects.get(name=role)])
    return user
