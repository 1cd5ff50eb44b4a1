"""A forged cross-site POST (no CSRF token) is refused everywhere a session can write."""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.test import Client

pytestmark = pytest.mark.django_db


@pytest.fixture
def forger(curator):
    """The curator's browser, driven by another site: the session cookie, no CSRF token."""
    client = Client(enforce_csrf_checks=True)
    client.force_login(curator)
    return client


def writes(lab, make_cv):
    """(url, data) of every page form that writes, each filled in as a user would."""
    return [
        ("/upload/", {"files": [SimpleUploadedFile("u7.csv", make_cv(unit="U7"))], "store": "1",
                      "model": "auto"}),
        ("/fixtures/", {"name": "forged meter", "kind": "meter"}),
        (f"/fixtures/{lab.calibration.fixture_id}/", {"measured_at": "2026-03-01 10:00",
                                                     "readings": "0, 16.4\n47, 9.1"}),
        (f"/flags/{lab.flag.pk}/review", {"action": "dismiss", "note": "forged"}),
        (f"/parts/{lab.part.part_number}/quality-settings/", {"shift_tolerance": "0.5"}),
        ("/account/tokens/", {"name": "forged", "scope": "read"}),
        (f"/account/tokens/{lab.token.pk}/revoke", {}),
        (f"/units/{lab.unit.pk}/", {"derive": "1"}),
        ("/accounts/logout/", {}),
    ]  # fmt: skip


def test_every_page_form_refuses_a_post_without_the_csrf_token(lab, make_cv, forger, rows):
    from labdb.api.models import ApiToken
    from labdb.quality.models import Flag

    before = rows()
    got = {url: forger.post(url, data).status_code for url, data in writes(lab, make_cv)}
    assert got == {url: 403 for url in got}
    assert rows() == before
    assert Flag.objects.get(pk=lab.flag.pk).state == "open"
    assert ApiToken.objects.get(pk=lab.token.pk).revoked_at is None
    assert forger.get("/").status_code == 200  # the forged logout did not end the session


def test_the_api_refuses_a_session_post_without_the_csrf_token(lab, forger, rows):
    before = rows()
    response = forger.post(
        "/api/v1/lots/", {"part": lab.part.part_number, "code": "FORGED"},
        content_type="application/json",
    )  # fmt: skip
    assert response.status_code == 403
    assert "CSRF" in response.json()["errors"][0]["message"]
    assert rows() == before


def test_the_same_post_with_the_token_goes_through(lab, forger):
    """The control: what the forged requests lacked is only the token."""
    from labdb.measurements.models import Fixture

    forger.get("/fixtures/")
    token = forger.cookies["csrftoken"].value
    response = forger.post(
        "/fixtures/", {"name": "real meter", "kind": "meter", "csrfmiddlewaretoken": token}
    )
    assert response.status_code == 302
    assert Fixture.objects.filter(name="real meter").exists()
