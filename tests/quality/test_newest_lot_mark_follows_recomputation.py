"""Each part's newest lot summary per condition set is marked, and the mark follows changes."""

import datetime as dt

import pytest

from labdb.catalog.models import Lot
from labdb.quality.models import LotSummary
from labdb.quality.services import recompute_part
from labdb.quality.services.newest import newest_rows

pytestmark = pytest.mark.django_db

D = dt.date


def test_the_rule_undated_lots_are_oldest_and_ties_go_to_the_later_lot():
    # Rows: (id, part, lot, illumination, temperature band, received). Common practice for
    # "latest lot" (received order, registration order breaking ties), no source.
    rows = [
        (1, 1, 10, "dark", 25.0, None),
        (2, 1, 11, "dark", 25.0, D(2026, 1, 5)),
        (3, 1, 12, "dark", 25.0, D(2026, 1, 5)),
        (4, 1, 13, "dark", 25.0, D(2025, 12, 1)),
        (5, 1, 10, "illuminated", 25.0, None),
        (6, 2, 20, "dark", 25.0, None),
        (7, 2, 21, "dark", 30.0, D(2020, 1, 1)),
    ]
    assert newest_rows(rows) == {3, 5, 6, 7}


def marked(part):
    return sorted(
        LotSummary.objects.filter(lot__part=part, newest_in_condition=True).values_list(
            "lot__code", flat=True
        )
    )


def test_recomputation_marks_the_newest_lot_and_moves_the_mark(part, make_lot):
    old = make_lot("M1", [50e-12] * 3, received=D(2026, 1, 1))
    make_lot("M2", [50e-12] * 3, received=D(2026, 6, 1))
    recompute_part(part)
    assert marked(part) == ["M2"]
    # The receipt date is corrected: M1 was received last. The copy and the mark follow.
    Lot.objects.filter(pk=old.pk).update(received_on=D(2026, 9, 1))
    recompute_part(part)
    assert marked(part) == ["M1"]
    assert LotSummary.objects.get(lot=old).received_on == D(2026, 9, 1)


def test_editing_a_receipt_date_recomputes_the_part(
    part, make_lot, django_capture_on_commit_callbacks
):
    old = make_lot("M1", [50e-12] * 3, received=D(2026, 1, 1))
    make_lot("M2", [50e-12] * 3, received=D(2026, 6, 1))
    recompute_part(part)
    old.received_on = D(2026, 9, 1)
    with django_capture_on_commit_callbacks(execute=True):
        old.save()
    assert marked(part) == ["M1"]
    assert LotSummary.objects.get(lot=old).received_on == D(2026, 9, 1)


def test_archiving_a_lot_drops_its_summary_and_passes_the_mark_back(
    part, make_lot, django_capture_on_commit_callbacks
):
    make_lot("M1", [50e-12] * 3, received=D(2026, 1, 1))
    new = make_lot("M2", [50e-12] * 3, received=D(2026, 6, 1))
    recompute_part(part)
    new.archived = True
    with django_capture_on_commit_callbacks(execute=True):
        new.save()
    assert marked(part) == ["M1"]
    assert not LotSummary.objects.filter(lot=new).exists()
