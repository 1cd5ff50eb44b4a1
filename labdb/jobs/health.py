"""``/healthz``: is the database reachable, and the broker if one is configured (no login)."""

from __future__ import annotations

import logging

from django.conf import settings
from django.contrib.auth.decorators import login_not_required
from django.db import connection
from django.http import JsonResponse
from django.views.decorators.cache import never_cache
from django.views.decorators.http import require_GET

log = logging.getLogger("labdb.health")


def _database() -> str:
    with connection.cursor() as cursor:
        cursor.execute("SELECT 1")
        cursor.fetchone()
    return "ok"


def _broker() -> str:
    url = getattr(settings, "CELERY_BROKER_URL", "")
    if not url:
        return "not configured"
    from kombu import Connection

    with Connection(url, connect_timeout=2, transport_options={"socket_timeout": 2}) as conn:
        conn.ensure_connection(max_retries=1, interval_start=0, timeout=3)
        if conn.transport_cls == "redis" or url.startswith(("redis://", "rediss://")):
            conn.default_channel.client.ping()
    return "ok"


@login_not_required
@never_cache
@require_GET
def healthz(request):
    """200 with ``{"status": "ok", ...}`` when every check passes, else 503 naming the failure."""
    checks: dict[str, str] = {}
    healthy = True
    for name, check in (("database", _database), ("broker", _broker)):
        try:
            checks[name] = check()
        except Exception as exc:  # any failure means unhealthy; say which and why
            healthy = False
            checks[name] = f"error: {type(exc).__name__}"
            log.warning(
                "health check failed",
                extra={"event": "health_failed", "check": name, "error": str(exc)[:300]},
            )
    body = {"status": "ok" if healthy else "unavailable", **checks}
    return JsonResponse(body, status=200 if healthy else 503)
