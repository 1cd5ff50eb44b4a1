"""Reviews are kept across refits: the flag row stays, with its state, note and reviewer."""

import pytest

from labdb.measurements.models import Sweep
from labdb.measurements.services import record_file, refit_sweeps
from labdb.quality.models import Flag, FlagState
from labdb.quality.services import review_flag

pytestmark = pytest.mark.django_db


@pytest.fixture
def uploaded(bench, make_cv, django_capture_on_commit_callbacks):
    """Eight units of lot L1 uploaded as files (the real path); U08 has CJO 30 % low."""
    for i in range(8):
        cjo = 50e-12 * (1 + 0.01 * ((i * 7) % 5 - 2)) * (0.7 if i == 7 else 1.0)
        data = make_cv(cjo=cjo, unit=f"U{i + 1:02d}", noise=0.002, seed=i)
        # The upload path recomputes quality once its transaction commits.
        with django_capture_on_commit_callbacks(execute=True):
            (outcome,) = record_file(data, f"u{i}.csv", origin="command")
        assert outcome.status == "stored", outcome.problems
    return Flag.objects.get(unit__label="U08", rule="unit_zscore", figure="c_low")


def test_an_acknowledged_flag_stays_acknowledged_after_a_refit(uploaded, curator):
    review_flag(uploaded, FlagState.ACKNOWLEDGED, curator, "known: unit from a rework batch")
    sweeps = Sweep.objects.filter(unit__lot__code="L1").values_list("pk", flat=True)
    summary = refit_sweeps(sweeps, model="junction+cp")
    assert summary.new_versions == 8  # every sweep got version 2 and the hook ran
    flag = Flag.objects.get(pk=uploaded.pk)
    assert flag.active and flag.state == FlagState.ACKNOWLEDGED
    assert flag.note == "known: unit from a rework batch" and flag.reviewed_by == curator
    assert Flag.objects.filter(unit__label="U08", rule="unit_zscore", figure="c_low").count() == 1


def test_a_dismissed_flag_stays_dismissed_after_a_refit(uploaded, curator):
    review_flag(uploaded, FlagState.DISMISSED, curator, "")
    refit_sweeps(Sweep.objects.values_list("pk", flat=True), model="junction+cp")
    flag = Flag.objects.get(pk=uploaded.pk)
    assert flag.state == FlagState.DISMISSED and flag.reviewed_by == curator
