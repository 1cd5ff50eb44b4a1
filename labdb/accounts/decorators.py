"""View guards by role: a logged-in user without the role gets 403, not a redirect loop."""

from __future__ import annotations

from functools import wraps

from django.core.exceptions import PermissionDenied

from labdb.accounts.roles import has_role


def role_required(role: str):
    def decorate(view):
        @wraps(view)
        def wrapped(request, *args, **kwargs):
            if not has_role(request.user, role):
                raise PermissionDenied(f"this page needs the '{role}' role")
            return view(request, *args, **kwargs)

        return wrapped

    return decorate
