"""GET sweeps/, sweeps/{id}/ and sweeps/{id}/raw: conditions, points, raw bytes, filters."""

import pytest

from labdb.measurements.services import SweepContext, record_file

pytestmark = pytest.mark.django_db


@pytest.fixture
def api(client_for):
    return client_for("token_read")


def test_the_detail_holds_conditions_points_raw_reading_and_current_fit(api, stored_sweep):
    body = api.get(f"/api/v1/sweeps/{stored_sweep.pk}/").json()
    assert body["conditions"] == {
        "temperature_c": 25.0,
        "illumination": "dark",
        "test_frequency_hz": 1e6,
        "test_level_v": None,
        "measured_at": "2026-02-01T10:00:00Z",
        "operator": "",
    }
    points = body["points"]
    assert points["bias_v"] == stored_sweep.points["bias_v"]
    assert points["capacitance_f"] == stored_sweep.points["capacitance_f"]
    # A meter reads capacitance itself: the raw reading is the capacitance column.
    assert points["reading"] == {
        "quantity": "capacitance_f",
        "unit": "F",
        "values": stored_sweep.points["capacitance_f"],
    }
    assert body["current_fit"]["id"] == stored_sweep.current_fit_id
    assert body["raw"]["sha256"] == stored_sweep.raw_sha256
    assert body["raw"]["url"] == f"/api/v1/sweeps/{stored_sweep.pk}/raw"


def test_raw_answers_the_original_bytes(api, stored_sweep):
    response = api.get(f"/api/v1/sweeps/{stored_sweep.pk}/raw")
    assert response.status_code == 200
    assert response["Content-Type"] == "application/octet-stream"
    assert "u1.csv" in response["Content-Disposition"]
    with stored_sweep.raw_file.open("rb") as fh:
        assert b"".join(response.streaming_content) == fh.read()


def test_an_unknown_sweep_is_404_in_the_error_shape(api, db):
    response = api.get("/api/v1/sweeps/999/")
    assert response.status_code == 404
    assert list(response.json()) == ["errors"]


def test_lists_leave_out_points_and_filter_by_unit_and_condition(api, bench, make_cv):
    for label, temp in (("U1", 25.0), ("U2", 25.0), ("U3", 60.0)):
        ctx = SweepContext(temperature_c=temp)
        (out,) = record_file(make_cv(unit=label), f"{label}.csv", ctx, recompute=False)
        assert out.status == "stored", out.problems
    every = api.get("/api/v1/sweeps/").json()["results"]
    assert len(every) == 3 and all("points" not in s for s in every)
    hot = api.get("/api/v1/sweeps/?temperature_min=50").json()["results"]
    assert [s["unit_label"] for s in hot] == ["U3"]
    unit = every[0]["unit"]
    assert [s["unit"] for s in api.get(f"/api/v1/sweeps/?unit={unit}").json()["results"]] == [unit]
    assert api.get("/api/v1/sweeps/?part=NOPE").json()["results"] == []


def test_sweep_lists_page_with_a_cursor_newest_first(api, bench, make_cv):
    ids = []
    for i in range(5):
        (out,) = record_file(make_cv(unit=f"U{i}"), f"u{i}.csv", recompute=False)
        ids.append(out.sweep.pk)
    first = api.get("/api/v1/sweeps/?page_size=2").json()
    assert [s["id"] for s in first["results"]] == ids[::-1][:2]
    assert "cursor=" in first["next"] and "page=" not in first["next"]
    second = api.get(first["next"]).json()
    assert [s["id"] for s in second["results"]] == ids[::-1][2:4]


def test_a_filter_with_a_bad_value_is_a_located_400(api, db):
    response = api.get("/api/v1/sweeps/?unit=abc&kind=zz")
    assert response.status_code == 400
    assert {e["field"] for e in response.json()["errors"]} == {"unit", "kind"}
