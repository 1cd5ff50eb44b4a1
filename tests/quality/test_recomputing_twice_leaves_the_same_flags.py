"""Recomputation is idempotent: same flag rows, same evidence, no new lot-model versions."""

import pytest

from labdb.measurements.models import Fit
from labdb.quality.models import Flag, LotSummary
from labdb.quality.services import recompute_lots, recompute_part

pytestmark = pytest.mark.django_db


@pytest.fixture
def part_with_findings(part, make_lot, clean_cjos):
    lots = [make_lot(f"L{k}", clean_cjos(8, seed=k)) for k in range(4)]
    odd = clean_cjos(8, seed=50)
    odd[2] *= 0.6
    lots.append(make_lot("L4", odd * 1.2))  # shifted lot with an outlier unit
    recompute_part(part)
    return lots


def _snapshot():
    flags = sorted(
        Flag.objects.values_list(
            "pk", "rule", "figure", "unit_id", "lot_id", "active", "state", "evidence", "updated_at"
        )
    )
    summaries = sorted(
        LotSummary.objects.values_list("pk", "inputs_sha256", "figures", "computed_at")
    )
    return flags, summaries, Fit.objects.filter(lot_summary__isnull=False).count()


def test_a_second_run_changes_nothing(part, part_with_findings):
    before = _snapshot()
    assert before[0], "the case must have findings to compare"
    report = recompute_part(part)
    assert report.summarised == 0 and report.lot_fits == 0
    assert report.flags == {"created": 0, "updated": 0, "deactivated": 0, "reopened": 0}
    assert _snapshot() == before


def test_a_forced_run_rewrites_summaries_but_not_flags_or_fits(part, part_with_findings):
    flags_before, _, fits_before = _snapshot()
    report = recompute_part(part, force=True)
    assert report.summarised == 5 and report.lot_fits == 0
    flags_after, _, fits_after = _snapshot()
    assert flags_after == flags_before and fits_after == fits_before


def test_the_hook_entry_point_is_as_idempotent(part, part_with_findings):
    before = _snapshot()
    recompute_lots([lot.pk for lot in part_with_findings])
    assert _snapshot() == before
    assert Flag.objects.filter(lot__code="L4").exists()
