"""flags/: list and filter for every role, review (PATCH) for curators through review_flag."""

import pytest

from labdb.audit.models import AuditEvent
from labdb.catalog.models import Lot, Unit
from labdb.quality.models import Flag, FlagState

pytestmark = pytest.mark.django_db

PERSONAS = ("anonymous", "outsider", "viewer", "member", "curator", "token_read", "token_write")
READ = {"anonymous": 401, "outsider": 403, "token_read": 200, "token_write": 200}
# Reviews are curators' work; the tokens here belong to a member, and a read token may
# never change anything whatever its owner's role.
REVIEW = {"anonymous": 401, "curator": 200}


def _flag(part, lot, unit, rule, figure="c_low", **kw) -> Flag:
    return Flag.objects.create(
        part=part,
        lot=lot,
        unit=unit,
        rule=rule,
        figure=figure,
        condition="dark@25",
        summary=f"{rule} {figure}",
        evidence={"measure": {"value": 3.9, "limit": 3.5}},
        **kw,
    )


@pytest.fixture
def flags(bench):
    """Four flags over two lots: open/active, acknowledged, dismissed/inactive, a lot flag."""
    l1 = bench.lot
    l2 = Lot.objects.create(part=bench.part, code="L2")
    u1 = Unit.objects.create(lot=l1, label="U1")
    u2 = Unit.objects.create(lot=l2, label="U1")
    return {
        "open": _flag(bench.part, l1, u1, "unit_zscore"),
        "acked": _flag(bench.part, l1, u1, "unit_fit", state="acknowledged", note="known"),
        "gone": _flag(bench.part, l2, u2, "unit_zscore", state="dismissed", active=False),
        "lot": _flag(bench.part, l2, None, "lot_shift", figure="swing"),
    }


@pytest.mark.parametrize("persona", PERSONAS)
def test_every_role_reads_flags_and_only_curators_review(client_for, flags, persona):
    client = client_for(persona)
    flag = flags["open"]
    got = (
        client.get("/api/v1/flags/").status_code,
        client.get(f"/api/v1/flags/{flag.pk}/").status_code,
        client.patch(
            f"/api/v1/flags/{flag.pk}/", {"state": "dismissed"}, format="json"
        ).status_code,
    )
    assert got == (READ.get(persona, 200), READ.get(persona, 200), REVIEW.get(persona, 403))
    flag.refresh_from_db()
    assert flag.state == ("dismissed" if persona == "curator" else "open")


@pytest.mark.parametrize("scope, status", [("read", 403), ("write", 200)])
def test_a_curators_token_reviews_only_with_the_write_scope(client_for, flags, scope, status):
    client = client_for(f"token_{scope}", owner="curator")
    flag = flags["open"]
    response = client.patch(f"/api/v1/flags/{flag.pk}/", {"state": "dismissed"}, format="json")
    assert response.status_code == status


def test_flags_are_neither_created_replaced_nor_deleted_over_the_api(client_for, flags):
    client = client_for("curator")
    url = f"/api/v1/flags/{flags['open'].pk}/"
    assert client.post("/api/v1/flags/", {"rule": "unit_fit"}, format="json").status_code == 405
    assert client.put(url, {"state": "dismissed"}, format="json").status_code == 405
    assert client.delete(url).status_code == 405
    assert Flag.objects.count() == 4


def test_an_acknowledgement_persists_with_reviewer_time_and_audit_event(client_for, flags, curator):
    flag = flags["open"]
    before = AuditEvent.objects.filter(object_type="quality.flag", object_id=str(flag.pk)).count()
    response = client_for("curator").patch(
        f"/api/v1/flags/{flag.pk}/",
        {"state": "acknowledged", "note": "  rework batch, accepted  "},
        format="json",
    )
    assert response.status_code == 200, response.json()
    flag.refresh_from_db()
    assert flag.state == FlagState.ACKNOWLEDGED
    assert flag.note == "rework batch, accepted"
    assert flag.reviewed_by == curator and flag.reviewed_at is not None
    assert flag.evidence["reviewed"]["state"] == "acknowledged"  # review_flag wrote it
    body = response.json()
    assert (body["state"], body["note"], body["reviewed_by"]) == (
        "acknowledged",
        "rework batch, accepted",
        curator.username,
    )
    events = AuditEvent.objects.filter(object_type="quality.flag", object_id=str(flag.pk))
    assert events.count() == before + 1
    assert events.latest("at").actor == curator


def test_acknowledging_without_a_note_is_refused_naming_the_note(client_for, flags, errors_of):
    flag = flags["open"]
    client = client_for("curator")
    for payload in ({"state": "acknowledged"}, {"state": "acknowledged", "note": "   "}):
        response = client.patch(f"/api/v1/flags/{flag.pk}/", payload, format="json")
        assert response.status_code == 400
        assert list(errors_of(response)) == ["note"]
    flag.refresh_from_db()
    assert (flag.state, flag.reviewed_by) == ("open", None)


@pytest.mark.parametrize(
    "payload, field",
    [
        ({"state": "closed"}, "state"),
        ({}, "state"),
        ({"state": ["dismissed"]}, "state"),
        ({"state": "dismissed", "note": 7 * "x" * 1000}, "note"),
    ],
)
def test_a_malformed_review_is_refused_naming_the_field(
    client_for, flags, errors_of, payload, field
):
    response = client_for("curator").patch(
        f"/api/v1/flags/{flags['open'].pk}/", payload, format="json"
    )
    assert response.status_code == 400
    assert field in errors_of(response)


def test_reopening_and_missing_flags(client_for, flags):
    client = client_for("curator")
    acked = flags["acked"]
    response = client.patch(f"/api/v1/flags/{acked.pk}/", {"state": "open"}, format="json")
    assert response.status_code == 200
    acked.refresh_from_db()
    assert acked.state == "open" and acked.note == "known"  # reopening keeps the old note
    assert (
        client.patch("/api/v1/flags/999999/", {"state": "open"}, format="json").status_code == 404
    )
    assert client.get(f"/api/v1/flags/{'9' * 30}/").status_code == 404


def _ids(client, query=""):
    response = client.get("/api/v1/flags/" + query)
    assert response.status_code == 200, response.json()
    return [row["id"] for row in response.json()["results"]]


def test_filters_select_by_state_activity_rule_part_lot_and_unit(client_for, flags):
    client = client_for("viewer")
    f = {k: v.pk for k, v in flags.items()}
    newest_first = sorted(f.values(), reverse=True)  # created in order: ids follow time
    assert _ids(client) == newest_first
    assert _ids(client, "?state=open") == sorted([f["open"], f["lot"]], reverse=True)
    assert _ids(client, "?active=false") == [f["gone"]]
    assert _ids(client, "?rule=unit_zscore") == sorted([f["open"], f["gone"]], reverse=True)
    assert _ids(client, "?part=TST-V1") == newest_first
    assert _ids(client, "?part=NOPE") == []
    assert _ids(client, f"?lot={flags['lot'].lot_id}") == [f["lot"], f["gone"]]
    assert _ids(client, f"?unit={flags['open'].unit_id}") == [f["acked"], f["open"]]
    assert _ids(client, f"?lot={flags['lot'].lot_id}&state=open&active=true") == [f["lot"]]


def test_a_listed_flag_carries_its_subject_rule_and_review(client_for, flags):
    body = client_for("viewer").get("/api/v1/flags/?state=acknowledged").json()
    assert body["count"] == 1
    (row,) = body["results"]
    acked = flags["acked"]
    assert row["part"] == "TST-V1" and row["lot"] == acked.lot_id and row["lot_code"] == "L1"
    assert row["unit"] == acked.unit_id and row["unit_label"] == "U1"
    assert row["rule"] == "unit_fit" and row["rule_label"] == "poor fit"
    assert row["note"] == "known" and row["evidence"]["measure"]["limit"] == 3.5
    lot_flag = client_for("viewer").get(f"/api/v1/flags/{flags['lot'].pk}/").json()
    assert lot_flag["unit"] is None and lot_flag["unit_label"] is None


@pytest.mark.parametrize(
    "query, field",
    [
        ("?state=closed", "state"),
        ("?rule=no_such_rule", "rule"),
        ("?lot=abc", "lot"),
        ("?unit=" + "9" * 30, "unit"),
        ("?active=perhaps", "active"),
    ],
)
def test_malformed_filters_are_refused_naming_the_parameter(
    client_for, flags, errors_of, query, field
):
    response = client_for("viewer").get("/api/v1/flags/" + query)
    assert response.status_code == 400
    assert field in errors_of(response)


def test_the_flag_list_runs_a_fixed_number_of_queries(
    client_for, flags, bench, django_assert_num_queries
):
    for i in range(30):
        lot = Lot.objects.create(part=bench.part, code=f"Q{i}")
        _flag(bench.part, lot, Unit.objects.create(lot=lot, label="U1"), "unit_zscore")
    client = client_for("viewer")
    # Session, user, role groups; then the count and the rows joined with part, lot, unit
    # and reviewer.
    with django_assert_num_queries(3 + 2):
        body = client.get("/api/v1/flags/").json()
    assert body["count"] == 34 and len(body["results"]) == 34


def test_a_review_made_over_the_api_survives_a_recompute(
    client_for, bench, make_cv, curator, django_capture_on_commit_callbacks
):
    from labdb.measurements.services import record_file
    from labdb.quality.services import recompute_part

    # Eight units of lot L1 through the upload path; U08's CJO is 30 % low, so the
    # within-lot rule flags it (values chosen here, as in the quality tests).
    for i in range(8):
        cjo = 50e-12 * (1 + 0.01 * ((i * 7) % 5 - 2)) * (0.7 if i == 7 else 1.0)
        data = make_cv(cjo=cjo, unit=f"U{i + 1:02d}", noise=0.002, seed=i)
        with django_capture_on_commit_callbacks(execute=True):
            (outcome,) = record_file(data, f"u{i}.csv", origin="command")
        assert outcome.status == "stored", outcome.problems
    flag = Flag.objects.get(unit__label="U08", rule="unit_zscore", figure="c_low")
    response = client_for("curator").patch(
        f"/api/v1/flags/{flag.pk}/",
        {"state": "acknowledged", "note": "unit from a rework batch"},
        format="json",
    )
    assert response.status_code == 200
    recompute_part(bench.part, force=True)
    flag.refresh_from_db()
    assert flag.active and flag.state == FlagState.ACKNOWLEDGED
    assert flag.note == "unit from a rework batch" and flag.reviewed_by == curator
