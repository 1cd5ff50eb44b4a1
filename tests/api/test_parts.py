"""parts/ and parts/{part_number}/: lookup by part number, curators' edits validated."""

import pytest

from labdb.catalog.models import Part

pytestmark = pytest.mark.django_db


@pytest.fixture
def curator_api(client_for):
    return client_for("curator")


def test_a_part_is_found_by_its_part_number(client_for, bench):
    body = client_for("viewer").get("/api/v1/parts/TST-V1/").json()
    assert body["part_number"] == "TST-V1" and body["rated_reverse_v"] == 30.0


def test_parts_are_listed_in_pages_and_filtered(client_for, bench):
    for i in range(3):
        Part.objects.create(part_number=f"LED-{i}", kind="led")
    api = client_for("viewer")
    page = api.get("/api/v1/parts/?page_size=2").json()
    assert page["count"] == 4 and len(page["results"]) == 2 and "page=2" in page["next"]
    leds = api.get("/api/v1/parts/?kind=led").json()
    assert sorted(p["part_number"] for p in leds["results"]) == ["LED-0", "LED-1", "LED-2"]


def test_a_curator_creates_a_part_and_is_recorded_as_its_creator(curator_api, curator):
    response = curator_api.post(
        "/api/v1/parts/",
        {
            "part_number": "BB-1",
            "kind": "varactor",
            "rated_reverse_v": 12,
            "ref_bias_low_v": 1,
            "ref_bias_high_v": 8,
        },
        format="json",
    )
    assert response.status_code == 201, response.json()
    part = Part.objects.get(part_number="BB-1")
    assert part.created_by == curator and part.ref_bias_high_v == 8.0


@pytest.mark.parametrize(
    "change, field",
    [
        ({"rated_reverse_v": -5}, "rated_reverse_v"),
        ({"ref_bias_low_v": 5, "ref_bias_high_v": 2}, "ref_bias_high_v"),
        ({"spec_c_min_f": 0}, "spec_c_min_f"),
        ({"spec_c_min_f": 9e-12, "spec_c_max_f": 4e-12}, "spec_c_max_f"),
        ({"spec_min_swing": 0.5}, "spec_min_swing"),
        ({"shift_tolerance": 2}, "shift_tolerance"),
        ({"kind": "tube"}, "kind"),
        ({"part_number": "A/B"}, "part_number"),
    ],
)
def test_impossible_part_settings_are_400_naming_the_field(curator_api, bench, change, field):
    response = curator_api.patch("/api/v1/parts/TST-V1/", change, format="json")
    assert response.status_code == 400
    assert [e["field"] for e in response.json()["errors"]] == [field]
    bench.part.refresh_from_db()
    assert bench.part.rated_reverse_v == 30.0 and bench.part.ref_bias_low_v is None


def test_a_second_part_with_the_same_number_is_400(curator_api, bench):
    response = curator_api.post("/api/v1/parts/", {"part_number": "TST-V1"}, format="json")
    assert response.status_code == 400
    assert response.json()["errors"][0]["field"] == "part_number"
