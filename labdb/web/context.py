"""Template context: the user's role, so templates show only what the user may do."""

from labdb.accounts.roles import CURATOR, MEMBER, has_role, role_of


def roles(request):
    user = getattr(request, "user", None)
    return {
        "user_role": role_of(user),
        "can_upload": has_role(user, MEMBER),
        "can_curate": has_role(user, CURATOR),
    }
