"""Who may do what: roles for reading and writing, and a token's scope on top of them.

Reading needs ``viewer``; writing needs ``member`` unless a view asks for more (part
settings and flag reviews need ``curator``). A ``read`` token can only read, whatever the
role of its owner.
"""

from __future__ import annotations

from rest_framework.permissions import SAFE_METHODS, BasePermission

from labdb.accounts.roles import MEMBER, VIEWER, has_role
from labdb.api.models import ApiToken


class RolePermission(BasePermission):
    """Role-based access; views set ``read_role`` and ``write_role`` to change the defaults."""

    message = "your role does not allow this"

    def has_permission(self, request, view) -> bool:
        user = request.user
        if not user or not user.is_authenticated:
            return False  # DRF answers 401 with the authenticate header
        safe = request.method in SAFE_METHODS
        token = request.auth if isinstance(request.auth, ApiToken) else None
        if not safe and token is not None and not token.can_write:
            self.message = "this token has the 'read' scope; mint a 'write' token to change data"
            return False
        role = getattr(view, "read_role", VIEWER) if safe else getattr(view, "write_role", MEMBER)
        if not has_role(user, role):
            self.message = f"this needs the '{role}' role"
            return False
        return True
