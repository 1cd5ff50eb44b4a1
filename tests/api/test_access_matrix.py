"""Every endpoint × every persona: who may read, who may write, and what the others get."""

import math

import pytest

pytestmark = pytest.mark.django_db

PERSONAS = ("anonymous", "outsider", "viewer", "member", "curator", "token_read", "token_write")

#: Expected status of a read by each persona (401 = no credentials, 403 = no role).
READ = {
    "anonymous": 401,
    "outsider": 403,
    "viewer": 200,
    "member": 200,
    "curator": 200,
    "token_read": 200,
    "token_write": 200,
}


def read_urls(sweep, calibration):
    fit = sweep.current_fit_id
    lot = sweep.unit.lot_id
    return [
        "/api/v1/parts/",
        "/api/v1/parts/TST-V1/",
        "/api/v1/lots/",
        f"/api/v1/lots/{lot}/",
        "/api/v1/units/",
        f"/api/v1/units/{sweep.unit_id}/",
        "/api/v1/fixtures/",
        f"/api/v1/fixtures/{sweep.fixture_id}/",
        "/api/v1/calibrations/",
        f"/api/v1/calibrations/{calibration.pk}/",
        "/api/v1/sweeps/",
        f"/api/v1/sweeps/{sweep.pk}/",
        f"/api/v1/sweeps/{sweep.pk}/raw",
        f"/api/v1/sweeps/{sweep.pk}/fits/",
        f"/api/v1/fits/{fit}/",
        f"/api/v1/fits/{fit}/spice",
        f"/api/v1/lots/{lot}/summary",
        f"/api/v1/lots/{lot}/spice?corner=low",
    ]


@pytest.mark.parametrize("persona", PERSONAS)
def test_reading_every_endpoint_needs_the_viewer_role(
    client_for, bench, stored_sweep, lot_summary, persona
):
    client = client_for(persona)
    got = {url: client.get(url).status_code for url in read_urls(stored_sweep, bench.cal)}
    assert got == {url: READ[persona] for url in got}


#: Expected status of a write that members may make.
MEMBER_WRITE = {
    "anonymous": 401,
    "outsider": 403,
    "viewer": 403,
    "member": 201,
    "curator": 201,
    "token_read": 403,
    "token_write": 201,
}


REFS = [0.0, 47e-12, 100e-12]


def thomson(inductance_h: float, capacitance_f: float) -> float:
    """Thomson's formula f = 1/(2π√(LC)) [Hz]."""
    return 1 / (2 * math.pi * math.sqrt(inductance_h * capacitance_f))


def member_writes(bench, make_cv):
    return [
        ("/api/v1/lots/", {"part": "TST-V1", "code": "L9"}, "json"),
        ("/api/v1/units/", {"lot": bench.lot.pk, "label": "U9"}, "json"),
        ("/api/v1/fixtures/", {"name": "meter Z", "kind": "meter"}, "json"),
        (
            "/api/v1/calibrations/",
            {
                "fixture": bench.osc.pk,
                "measured_at": "2026-03-01T00:00:00Z",
                "ref_capacitance_f": REFS,
                "freq_hz": [thomson(4.7e-6, 20e-12 + c) for c in REFS],
            },
            "json",
        ),
        ("/api/v1/sweeps/", {"file": _named(make_cv(unit="U9"), "u9.csv")}, "multipart"),
    ]


def _named(data: bytes, name: str):
    from django.core.files.uploadedfile import SimpleUploadedFile

    return SimpleUploadedFile(name, data, content_type="text/csv")


@pytest.mark.parametrize("persona", PERSONAS)
def test_members_and_curators_write_the_catalogue_and_sweeps(client_for, bench, make_cv, persona):
    client = client_for(persona)
    got = {}
    for url, payload, fmt in member_writes(bench, make_cv):
        got[url] = client.post(url, payload, format=fmt).status_code
    assert got == {url: MEMBER_WRITE[persona] for url in got}


@pytest.mark.parametrize("persona", PERSONAS)
def test_member_level_updates_follow_the_same_rule(client_for, stored_sweep, persona):
    expected = 200 if MEMBER_WRITE[persona] == 201 else MEMBER_WRITE[persona]
    client = client_for(persona)
    lot, unit = stored_sweep.unit.lot, stored_sweep.unit
    got = {
        "lot": client.patch(f"/api/v1/lots/{lot.pk}/", {"notes": "n"}, format="json").status_code,
        "unit": client.patch(
            f"/api/v1/units/{unit.pk}/", {"notes": "n"}, format="json"
        ).status_code,
        "fixture": client.patch(
            f"/api/v1/fixtures/{stored_sweep.fixture_id}/", {"description": "d"}, format="json"
        ).status_code,
    }
    assert got == {"lot": expected, "unit": expected, "fixture": expected}


#: Part settings drive flags and spec checks: only curators change them.
CURATOR_WRITE = {
    "anonymous": 401,
    "outsider": 403,
    "viewer": 403,
    "member": 403,
    "curator": 201,
    "token_read": 403,
    "token_write": 403,
}


@pytest.mark.parametrize("persona", PERSONAS)
def test_only_curators_create_and_change_parts(client_for, bench, persona):
    client = client_for(persona)
    created = client.post("/api/v1/parts/", {"part_number": "NEW-1", "kind": "led"}, format="json")
    changed = client.patch("/api/v1/parts/TST-V1/", {"description": "x"}, format="json")
    expected = CURATOR_WRITE[persona]
    assert (created.status_code, changed.status_code) == (
        expected,
        200 if expected == 201 else expected,
    )


def test_a_curators_write_token_may_change_parts(client_for, bench):
    client = client_for("token_write", owner="curator")
    response = client.patch("/api/v1/parts/TST-V1/", {"rated_reverse_v": 25.0}, format="json")
    assert response.status_code == 200
    bench.part.refresh_from_db()
    assert bench.part.rated_reverse_v == 25.0


def test_nothing_can_be_deleted_over_the_api(client_for, stored_sweep):
    client = client_for("curator")
    for url in (
        "/api/v1/parts/TST-V1/",
        f"/api/v1/sweeps/{stored_sweep.pk}/",
        f"/api/v1/lots/{stored_sweep.unit.lot_id}/",
    ):
        assert client.delete(url).status_code == 405
