"""fixtures/ and calibrations/: members add fixtures and record calibrations."""

import math

import pytest

from labdb.measurements.models import Calibration, Fixture

pytestmark = pytest.mark.django_db

L_H, STRAY_F = 2.2e-6, 15e-12  # an invented oscillator fixture
REFS = [0.0, 10e-12, 33e-12, 68e-12]


def thomson(capacitance_f: float) -> float:
    """Thomson's formula f = 1/(2π√(LC)) [Hz] for the invented fixture."""
    return 1 / (2 * math.pi * math.sqrt(L_H * capacitance_f))


@pytest.fixture
def api(client_for):
    return client_for("token_write")


def test_a_calibration_gives_back_the_fixtures_inductance_and_stray(api, bench):
    payload = {
        "fixture": bench.osc.pk,
        "measured_at": "2026-04-01T08:00:00Z",
        "ref_capacitance_f": REFS,
        "freq_hz": [thomson(STRAY_F + c) for c in REFS],
    }
    response = api.post("/api/v1/calibrations/", payload, format="json")
    assert response.status_code == 201, response.json()
    body = response.json()
    # Exact readings from Thomson's formula: the line 1/(2πf)² = L·(C_stray + C_ref) is exact.
    assert body["inductance_h"] == pytest.approx(L_H, rel=1e-9)
    assert body["stray_f"] == pytest.approx(STRAY_F, rel=1e-8)
    assert body["inductance_sigma_h"] is not None and body["inductance_sigma_h"] >= 0
    assert Calibration.objects.filter(fixture=bench.osc).count() == 2


def test_a_meter_cannot_be_calibrated(api, bench):
    payload = {
        "fixture": bench.meter.pk,
        "measured_at": "2026-04-01T08:00:00Z",
        "ref_capacitance_f": REFS,
        "freq_hz": [thomson(STRAY_F + c) for c in REFS],
    }
    response = api.post("/api/v1/calibrations/", payload, format="json")
    assert response.status_code == 400
    assert "meter" in response.json()["errors"][0]["message"]


def test_readings_of_different_lengths_are_400_naming_freq_hz(api, bench):
    payload = {
        "fixture": bench.osc.pk,
        "measured_at": "2026-04-01T08:00:00Z",
        "ref_capacitance_f": REFS,
        "freq_hz": [1e7, 9e6],
    }
    response = api.post("/api/v1/calibrations/", payload, format="json")
    assert response.status_code == 400
    assert response.json()["errors"][0]["field"] == "freq_hz"


def test_calibrations_are_never_edited(api, bench):
    response = api.patch(f"/api/v1/calibrations/{bench.cal.pk}/", {"notes": "x"}, format="json")
    assert response.status_code == 405


def test_a_member_adds_a_fixture_with_validated_values(api, db):
    ok = api.post(
        "/api/v1/fixtures/",
        {"name": "osc B", "kind": "oscillator", "nominal_inductance_h": 1e-6},
        format="json",
    )
    assert ok.status_code == 201
    bad = api.post(
        "/api/v1/fixtures/",
        {"name": "osc C", "kind": "oscillator", "coupling_f": -1e-12},
        format="json",
    )
    assert bad.status_code == 400
    assert bad.json()["errors"][0]["field"] == "coupling_f"
    assert list(Fixture.objects.values_list("name", flat=True)) == ["osc B"]


def test_a_used_fixture_keeps_its_kind(api, stored_sweep):
    fixture = stored_sweep.fixture
    response = api.patch(f"/api/v1/fixtures/{fixture.pk}/", {"kind": "oscillator"}, format="json")
    assert response.status_code == 400
    fixture.refresh_from_db()
    assert fixture.kind == "meter"
