"""/healthz: no login, 200 when the database answers, 503 naming a dead broker."""

from __future__ import annotations


def test_it_answers_ok_without_login(client, db):
    r = client.get("/healthz")
    assert r.status_code == 200
    assert r.json() == {"status": "ok", "database": "ok", "broker": "not configured"}


def test_it_answers_503_when_the_configured_broker_is_unreachable(client, db, settings):
    # Port 9 on loopback: nothing listens there on this machine, so the connection is refused.
    settings.CELERY_BROKER_URL = "redis://127.0.0.1:9/0"
    r = client.get("/healthz")
    assert r.status_code == 503
    body = r.json()
    assert body["status"] == "unavailable" and body["database"] == "ok"
    assert body["broker"].startswith("error:")


def test_it_is_exempt_from_the_https_redirect(client, db, settings):
    settings.SECURE_SSL_REDIRECT = True
    assert client.get("/healthz").status_code == 200
    assert client.get("/jobs/").status_code == 301
