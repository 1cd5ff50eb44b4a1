"""lots/ and units/: members add and annotate them; a lot keeps its part, a unit its lot."""

import pytest

from labdb.catalog.models import Lot, Part, Unit

pytestmark = pytest.mark.django_db


@pytest.fixture
def api(client_for):
    return client_for("token_write")


def test_a_member_adds_a_lot_by_part_number(api, bench):
    response = api.post(
        "/api/v1/lots/",
        {"part": "TST-V1", "code": "L7", "received_on": "2026-03-02"},
        format="json",
    )
    assert response.status_code == 201, response.json()
    lot = Lot.objects.get(code="L7")
    assert lot.part == bench.part and str(lot.received_on) == "2026-03-02"


def test_a_lot_code_is_unique_within_its_part(api, bench):
    response = api.post("/api/v1/lots/", {"part": "TST-V1", "code": "L1"}, format="json")
    assert response.status_code == 400
    assert Lot.objects.filter(code="L1").count() == 1


def test_a_lot_of_an_unknown_part_is_400_naming_part(api, bench):
    response = api.post("/api/v1/lots/", {"part": "NOPE", "code": "L7"}, format="json")
    assert response.status_code == 400
    assert response.json()["errors"][0]["field"] == "part"


def test_a_lot_cannot_move_to_another_part(api, bench):
    Part.objects.create(part_number="OTHER")
    response = api.patch(f"/api/v1/lots/{bench.lot.pk}/", {"part": "OTHER"}, format="json")
    assert response.status_code == 400
    bench.lot.refresh_from_db()
    assert bench.lot.part == bench.part


def test_lots_filter_by_part_and_date(api, bench):
    Lot.objects.create(part=bench.part, code="L2", received_on="2026-05-01")
    got = api.get("/api/v1/lots/?part=TST-V1&received_after=2026-04-01").json()["results"]
    assert [lot["code"] for lot in got] == ["L2"]


def test_a_member_adds_a_unit_and_reads_its_part(api, bench):
    response = api.post("/api/v1/units/", {"lot": bench.lot.pk, "label": "U42"}, format="json")
    assert response.status_code == 201
    body = api.get(f"/api/v1/units/{response.json()['id']}/").json()
    assert (body["part"], body["lot_code"], body["label"]) == ("TST-V1", "L1", "U42")
    assert Unit.objects.filter(label="U42", lot=bench.lot).exists()


def test_a_unit_label_is_unique_within_its_lot(api, bench):
    api.post("/api/v1/units/", {"lot": bench.lot.pk, "label": "U1"}, format="json")
    again = api.post("/api/v1/units/", {"lot": bench.lot.pk, "label": "U1"}, format="json")
    assert again.status_code == 400
    assert Unit.objects.filter(label="U1").count() == 1


def test_archiving_a_unit_is_an_update(api, stored_sweep):
    unit = stored_sweep.unit
    response = api.patch(f"/api/v1/units/{unit.pk}/", {"archived": True}, format="json")
    assert response.status_code == 200
    unit.refresh_from_db()
    assert unit.archived is True
