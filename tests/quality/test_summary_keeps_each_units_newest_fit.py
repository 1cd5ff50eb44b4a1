"""A lot summary keeps each unit's most recent fit under its conditions (search reads them)."""

import datetime as dt

import pytest

from labdb.catalog.models import Unit
from labdb.measurements.models import Sweep
from labdb.quality.models import LotSummary
from labdb.quality.services import recompute_part

pytestmark = pytest.mark.django_db

T0 = dt.datetime(2026, 3, 1, 9, 0, tzinfo=dt.UTC)


def test_the_most_recent_measurement_wins_and_undated_sweeps_lose(part, make_lot, add_sweep):
    lot = make_lot("M1", [50e-12] * 3)  # U01..U03: one undated sweep each, M = 0.5
    u1, u2 = Unit.objects.get(lot=lot, label="U01"), Unit.objects.get(lot=lot, label="U02")
    # U01: a dated sweep beats its undated one, and the later of two dated ones wins.
    early = add_sweep(u1, 50e-12, m=0.40)
    late = add_sweep(u1, 50e-12, m=0.45)
    Sweep.objects.filter(pk=early.pk).update(measured_at=T0)
    Sweep.objects.filter(pk=late.pk).update(measured_at=T0 + dt.timedelta(days=1))
    # U02: two undated sweeps; the one stored later wins.
    add_sweep(u2, 50e-12, m=0.55)
    # Another condition set does not compete.
    add_sweep(u2, 50e-12, m=0.9, illumination="illuminated")
    recompute_part(part)
    fits = {row[1]: row for row in LotSummary.objects.get(lot=lot, illumination="dark").unit_fits}
    assert sorted(fits) == ["U01", "U02", "U03"]
    assert fits["U01"][0] == u1.pk and fits["U01"][4] == pytest.approx(0.45)
    assert fits["U02"][4] == pytest.approx(0.55)
    assert fits["U03"][2:] == pytest.approx([50e-12, 0.8, 0.5, 0.0])
