"""The audit trail: who created, changed, archived or reviewed what; curators read it."""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def _only_new_events(bench):
    """Events written while setting up (the bench catalogue) are not what a test looks at."""
    from labdb.audit.models import AuditEvent

    global _MARK
    _MARK = AuditEvent.objects.order_by("-id").values_list("id", flat=True).first() or 0


_MARK = 0


def events(**filters):
    from labdb.audit.models import AuditEvent

    # Tokens minted for the test's personas are set-up too (their own test is in tests/api).
    new = AuditEvent.objects.filter(id__gt=_MARK, **filters).exclude(object_type="api.apitoken")
    return list(new.order_by("id"))


def test_an_api_upload_records_who_created_the_lot_unit_sweep_and_fit(
    bench, make_cv, client_as, member
):
    response = client_as("token_write").post(
        "/api/v1/sweeps/", {"file": SimpleUploadedFile("u5.csv", make_cv(lot="L5", unit="U5"))}
    )
    assert response.status_code == 201
    made = [(e.object_type, e.action, e.actor_name, e.via) for e in events(action="created")]
    assert made == [
        ("catalog.lot", "created", "milo", "api"),
        ("catalog.unit", "created", "milo", "api"),
        ("measurements.sweep", "created", "milo", "api"),
        ("measurements.fit", "created", "milo", "api"),
    ]
    (sweep_event,) = events(object_type="measurements.sweep")
    assert sweep_event.object_id == str(response.json()["id"])
    assert sweep_event.changes["raw_name"] == "u5.csv"
    assert sweep_event.changes["points"].startswith("(not copied")  # bulky JSON summarised


def test_a_refused_upload_leaves_no_event(bench, client_as):
    bad = SimpleUploadedFile("bad.csv", b"bias (V),C (pF)\n0,abc\n")
    assert client_as("token_write").post("/api/v1/sweeps/", {"file": bad}).status_code == 400
    assert events() == []


def test_a_change_records_old_and_new_values_and_a_save_without_change_records_nothing(
    bench, client_as
):
    client = client_as("curator")
    response = client.patch(
        "/api/v1/parts/TST-V1/", {"rated_reverse_v": 25.0, "description": "tuning diode"},
        content_type="application/json",
    )  # fmt: skip
    assert response.status_code == 200
    (change,) = events(action="changed")
    assert (change.actor_name, change.object_type, change.object_id) == (
        "cora",
        "catalog.part",
        str(bench.part.pk),
    )
    assert change.changes == {"rated_reverse_v": [30.0, 25.0], "description": ["", "tuning diode"]}
    bench.part.refresh_from_db()
    bench.part.save()  # same values: nothing to record
    assert len(events(action="changed")) == 1


def test_archiving_in_the_admin_is_recorded_per_row(bench, client_as):
    from labdb.catalog.models import Lot

    other = Lot.objects.create(part=bench.part, code="L2")
    response = client_as("curator").post(
        "/admin/catalog/lot/",
        {"action": "archive", "_selected_action": [bench.lot.pk, other.pk]},
    )
    assert response.status_code == 302
    archived = events(action="archived")
    assert sorted(e.object_id for e in archived) == sorted([str(bench.lot.pk), str(other.pk)])
    assert {(e.actor_name, e.via) for e in archived} == {("cora", "page")}
    assert archived[0].changes == {"archived": [False, True]}


def test_a_flag_review_is_recorded_with_the_reviewer_and_the_note(bench, client_as):
    from labdb.quality.models import Flag

    flag = Flag.objects.create(part=bench.part, lot=bench.lot, rule="lot_shift", summary="moved")
    assert events() == []  # flags written by the rules are not people's actions
    response = client_as("curator").post(
        f"/flags/{flag.pk}/review", {"action": "acknowledge", "note": "supplier confirmed"}
    )
    assert response.status_code == 302
    (review,) = events(action="reviewed")
    assert (review.actor_name, review.object_type) == ("cora", "quality.flag")
    assert review.changes["state"] == ["open", "acknowledged"]
    assert review.changes["note"] == ["", "supplier confirmed"]


def test_a_refit_records_the_new_version_and_who_asked(bench, make_cv, curator):
    from labdb.measurements.services import record_file, refit_sweeps

    (out,) = record_file(make_cv(), "u1.csv", recompute=False)  # no request: nobody
    summary = refit_sweeps([out.sweep.pk], model="junction", user=curator)
    assert summary.new_versions == 1
    # Only the sweep's own versions (a lot model refitted by quality may follow).
    first, second = [
        e for e in events(object_type="measurements.fit") if e.changes.get("sweep") == out.sweep.pk
    ]
    assert (first.actor_name, first.via, first.changes["version"]) == ("", "", 1)
    assert (second.actor_name, second.changes["version"]) == ("cora", 2)


def test_events_cannot_be_changed(bench):
    from labdb.audit.models import AuditEvent, AuditImmutableError

    (event,) = AuditEvent.objects.filter(object_type="measurements.calibration")
    event.summary = "rewritten"
    with pytest.raises(AuditImmutableError):
        event.save()


def test_curators_filter_the_audit_page_by_actor_object_and_action(bench, make_cv, client_as):
    member_api = client_as("token_write")
    member_api.post("/api/v1/sweeps/", {"file": SimpleUploadedFile("u1.csv", make_cv())})
    client_as("curator").patch(
        "/api/v1/parts/TST-V1/", {"description": "x"}, content_type="application/json"
    )
    page = client_as("curator")
    everything = page.get("/audit/")
    assert everything.status_code == 200
    by_actor = page.get("/audit/", {"actor": "cora"}).content.decode()
    assert "changed part TST-V1" in by_actor and "created sweep" not in by_actor
    by_action = page.get("/audit/", {"action": "created", "object_type": "measurements.sweep"})
    assert by_action.context["page"].paginator.count == 1
    by_object = page.get(
        "/audit/", {"object_type": "catalog.part", "object_id": str(bench.part.pk)}
    )
    assert [e.action for e in by_object.context["page"]] == ["changed", "created"]
    assert page.get("/audit/", {"action": "erased"}).status_code == 400


@pytest.mark.parametrize("persona", ["viewer", "member", "outsider"])
def test_only_curators_see_the_audit_page(bench, client_as, persona):
    assert client_as(persona).get("/audit/").status_code == 403
