"""Deleting a part, lot or unit never silently deletes stored sweeps or their raw files."""

import pytest
from django.db.models import ProtectedError

from labdb.measurements.models import Sweep
from labdb.measurements.services import record_file

pytestmark = pytest.mark.django_db


@pytest.fixture
def stored(bench, make_cv):
    (outcome,) = record_file(make_cv(), "u1.csv")
    assert outcome.status == "stored", outcome.problems
    return outcome.sweep


@pytest.mark.parametrize("target", ["part", "lot", "unit"])
def test_it_refuses_to_delete_what_holds_sweeps(stored, target):
    obj = {"part": stored.unit.lot.part, "lot": stored.unit.lot, "unit": stored.unit}[target]
    with pytest.raises(ProtectedError):
        obj.delete()
    assert Sweep.objects.filter(pk=stored.pk).exists()
    assert stored.raw_file.storage.exists(stored.raw_file.name)


def test_the_admin_explains_why_a_part_cannot_be_deleted(stored, curator_client):
    part = stored.unit.lot.part
    url = f"/admin/catalog/part/{part.pk}/delete/"
    response = curator_client.post(url, {"post": "yes"})
    assert response.status_code == 200
    assert b"protected" in response.content.lower()
    part.refresh_from_db()
    assert part.pk is not None


def test_a_curator_can_archive_a_part_instead(stored, curator_client):
    part = stored.unit.lot.part
    response = curator_client.post(
        "/admin/catalog/part/",
        {"action": "archive", "_selected_action": [part.pk]},
    )
    assert response.status_code == 302
    part.refresh_from_db()
    assert part.archived is True
