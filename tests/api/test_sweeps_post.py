"""POST sweeps/: a bench file (multipart) or JSON points → 201 with the sweep and its fit."""

import math
from pathlib import Path

import numpy as np
import pytest
from django.conf import settings
from django.core.files.uploadedfile import SimpleUploadedFile

from labdb.catalog.models import Unit
from labdb.measurements.models import Fit, Sweep
from labdb.physics import junction_capacitance

pytestmark = pytest.mark.django_db


@pytest.fixture
def api(client_for):
    return client_for("token_write")


def _file(data: bytes, name: str = "u1.csv"):
    return SimpleUploadedFile(name, data, content_type="text/csv")


def _files_on_disk():
    root = Path(settings.MEDIA_ROOT)
    return sorted(p for p in root.rglob("*") if p.is_file()) if root.exists() else []


def test_a_posted_file_is_stored_and_answered_with_its_fit(api, bench, make_cv):
    data = make_cv(cjo=47e-12, vj=0.8, m=0.55, unit="U3")
    response = api.post("/api/v1/sweeps/", {"file": _file(data)}, format="multipart")
    assert response.status_code == 201, response.json()
    body = response.json()
    assert body["duplicate"] is False and body["rejected"] == []
    sweep = Sweep.objects.get(pk=body["id"])
    assert body["unit_label"] == "U3" and sweep.unit.label == "U3"
    with sweep.raw_file.open("rb") as fh:
        assert fh.read() == data
    fit = body["current_fit"]
    assert fit["id"] == sweep.current_fit_id and fit["version"] == 1
    # Noise-free points from known parameters: the fit recovers them (junction model).
    assert fit["params"]["cjo"] == pytest.approx(47e-12, rel=1e-4)
    assert fit["params"]["vj"] == pytest.approx(0.8, rel=1e-3)
    assert fit["params"]["m"] == pytest.approx(0.55, rel=1e-3)
    assert Fit.objects.get(pk=fit["id"]).origin == "api"


def test_fields_of_the_form_win_over_the_files_own_lines(api, bench, make_cv):
    response = api.post(
        "/api/v1/sweeps/",
        {
            "file": _file(make_cv(unit="U1")),
            "unit": "U8",
            "temperature_c": "40",
            "illumination": "ambient",
        },
        format="multipart",
    )
    assert response.status_code == 201
    body = response.json()
    assert body["unit_label"] == "U8"
    assert body["conditions"]["temperature_c"] == 40.0
    assert body["conditions"]["illumination"] == "ambient"
    assert any("U1" in note and "U8" in note for note in body["notes"])


def test_the_same_file_again_answers_200_duplicate_and_stores_nothing(api, bench, make_cv):
    data = make_cv()
    first = api.post("/api/v1/sweeps/", {"file": _file(data)}, format="multipart")
    again = api.post("/api/v1/sweeps/", {"file": _file(data, "copy.csv")}, format="multipart")
    assert (first.status_code, again.status_code) == (201, 200)
    assert again.json()["duplicate"] is True
    assert again.json()["id"] == first.json()["id"]
    assert again.json()["current_fit"]["id"] == first.json()["current_fit"]["id"]
    assert Sweep.objects.count() == 1 and Fit.objects.count() == 1


def test_a_bad_file_is_400_with_located_errors_and_nothing_written(api, bench, make_cv):
    lines = make_cv().decode().splitlines()
    lines[12] = "2.5000,twelve"  # line 13 of the file: a reading that is not a number
    response = api.post(
        "/api/v1/sweeps/",
        {"file": _file(("\n".join(lines) + "\n").encode(), "bad.csv")},
        format="multipart",
    )
    assert response.status_code == 400
    errors = response.json()["errors"]
    assert any(e.get("line") == 13 and e.get("file") == "bad.csv" for e in errors), errors
    assert all(e["message"] for e in errors)
    assert Sweep.objects.count() == 0 and Unit.objects.count() == 0
    assert _files_on_disk() == []


def test_an_unknown_part_is_400_naming_the_field(api, bench, make_cv):
    response = api.post(
        "/api/v1/sweeps/", {"file": _file(make_cv(part="NOPE-7"))}, format="multipart"
    )
    assert response.status_code == 400
    (error,) = response.json()["errors"]
    assert error["field"] == "part" and "NOPE-7" in error["message"]


def test_json_points_are_stored_as_a_sweep(api, bench):
    v = np.linspace(0.0, 15.0, 31)
    c = junction_capacitance(v, 33e-12, 0.7, 0.47)
    payload = {
        "part": "TST-V1",
        "lot": "L1",
        "unit": "U4",
        "fixture": "meter A",
        "temperature_c": 25,
        "illumination": "dark",
        "measured_at": "2026-02-03T09:00:00Z",
        "points": {"bias_v": v.tolist(), "capacitance_f": c.tolist()},
    }
    response = api.post("/api/v1/sweeps/", payload, format="json")
    assert response.status_code == 201, response.json()
    body = response.json()
    assert body["kind"] == "cv" and body["n_points"] == 31
    np.testing.assert_allclose(body["points"]["capacitance_f"], c, rtol=1e-12)
    assert body["current_fit"]["params"]["cjo"] == pytest.approx(33e-12, rel=1e-4)


def test_json_frequency_points_are_converted_with_the_calibration(api, bench):
    v = np.linspace(0.0, 9.0, 31)
    cj = junction_capacitance(v, 30e-12, 0.9, 0.45)
    # Thomson's formula with the bench oscillator's L and stray capacitance.
    f = 1 / (2 * math.pi * np.sqrt(bench.inductance_h * (bench.stray_f + cj)))
    payload = {
        "part": "TST-V1",
        "lot": "L1",
        "unit": "U2",
        "fixture": "osc A",
        "measured_at": "2026-02-01T10:00:00Z",
        "points": {"bias_v": v.tolist(), "frequency_hz": f.tolist()},
    }
    response = api.post("/api/v1/sweeps/", payload, format="json")
    assert response.status_code == 201, response.json()
    body = response.json()
    assert body["kind"] == "fv" and body["calibration"] == bench.cal.pk
    assert body["points"]["reading"]["quantity"] == "frequency_hz"
    np.testing.assert_allclose(body["points"]["reading"]["values"], f, rtol=1e-12)
    np.testing.assert_allclose(body["points"]["capacitance_f"], cj, rtol=1e-6)
    assert body["current_fit"]["params"]["cjo"] == pytest.approx(30e-12, rel=1e-3)


def test_bad_json_points_are_located_by_index(api, bench):
    payload = {
        "part": "TST-V1",
        "lot": "L1",
        "unit": "U4",
        "fixture": "meter A",
        "points": {"bias_v": [0.0, 1.0, 2.0, 3.0], "capacitance_f": [5e-11, 4e-11, -1e-11, 3e-11]},
    }
    response = api.post("/api/v1/sweeps/", payload, format="json")
    assert response.status_code == 400
    errors = response.json()["errors"]
    assert any(e.get("line") == 3 and e.get("column") == "capacitance_f" for e in errors), errors
    assert Sweep.objects.count() == 0


@pytest.mark.parametrize(
    "payload, field",
    [
        ({}, None),
        ({"points": {"bias_v": [1, 2, 3]}}, "points"),
        (
            {"points": {"bias_v": [1, 2], "capacitance_f": [1e-12, 2e-12]}, "temperature_c": 900},
            "temperature_c",
        ),
        ({"points": {"bias_v": [1, 2], "capacitance_f": [1e-12, 2e-12]}, "kind": "xy"}, "kind"),
    ],
)
def test_malformed_requests_are_400_with_the_field_named(api, bench, payload, field):
    response = api.post("/api/v1/sweeps/", payload, format="json")
    assert response.status_code == 400
    errors = response.json()["errors"]
    assert [e.get("field") for e in errors] == [field]


def test_a_body_beyond_the_upload_limit_is_413(api, bench, make_cv, settings):
    settings.UPLOAD_MAX_BYTES = 500
    response = api.post("/api/v1/sweeps/", {"file": _file(make_cv())}, format="multipart")
    assert response.status_code == 413
    assert "UPLOAD_MAX_BYTES" in response.json()["errors"][0]["message"]
    assert Sweep.objects.count() == 0


def test_invalid_json_is_a_400_not_a_500(api, bench):
    response = api.generic(
        "POST", "/api/v1/sweeps/", b'{"points": [', content_type="application/json"
    )
    assert response.status_code == 400
    assert "JSON" in response.json()["errors"][0]["message"]
