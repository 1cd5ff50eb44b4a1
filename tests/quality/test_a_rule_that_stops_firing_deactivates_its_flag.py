"""When data change so a rule no longer fires, the flag turns inactive and keeps its review."""

import pytest

from labdb.measurements.models import Sweep
from labdb.quality.models import Flag, FlagState
from labdb.quality.services import recompute_lots, review_flag

pytestmark = pytest.mark.django_db


def test_archiving_the_outlier_sweep_deactivates_but_keeps_the_flag(
    part, make_lot, clean_cjos, curator
):
    cjos = clean_cjos(9, seed=7)
    cjos[4] *= 0.7
    lot = make_lot("A1", cjos)
    recompute_lots([lot.pk])
    flag = Flag.objects.get(unit__label="U05", rule="unit_zscore", figure="c_low")
    review_flag(flag, FlagState.ACKNOWLEDGED, curator, "known")
    Sweep.objects.filter(unit__label="U05").update(archived=True)
    recompute_lots([lot.pk])
    flag.refresh_from_db()
    assert not flag.active
    assert (flag.state, flag.note, flag.reviewed_by) == (FlagState.ACKNOWLEDGED, "known", curator)
    # Back in use: the same row fires again rather than a new one appearing.
    Sweep.objects.filter(unit__label="U05").update(archived=False)
    recompute_lots([lot.pk])
    assert Flag.objects.filter(unit__label="U05", rule="unit_zscore", figure="c_low").get().active
