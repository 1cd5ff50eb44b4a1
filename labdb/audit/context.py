"""Who is acting right now: the request being served (set by the middleware), or nobody.

Model signals carry no request, so the middleware keeps the current request in a context
variable for them. The user is read lazily: the REST API authenticates a token inside the
view, after the middleware ran, and DRF then sets ``user`` on the underlying request too.
"""

from __future__ import annotations

from contextvars import ContextVar

_request: ContextVar = ContextVar("labdb_audit_request", default=None)


def current_request():
    """The HttpRequest being served on this thread, or None (commands, workers)."""
    return _request.get()


def current_user():
    """The authenticated user of the current request, or None."""
    request = _request.get()
    user = getattr(request, "user", None) if request is not None else None
    if user is None or not getattr(user, "is_authenticated", False):
        return None
    return user


def current_via() -> str:
    """``api`` for REST calls, ``page`` for the site, empty outside a request."""
    request = _request.get()
    if request is None:
        return ""
    return "api" if request.path.startswith("/api/") else "page"


class AuditContextMiddleware:
    """Keep the request in a context variable while it is served (after authentication)."""

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        token = _request.set(request)
        try:
            return self.get_response(request)
        finally:
            _request.reset(token)
