"""The lot model: a junction fit to the lot's median curve, a new version only when it changes."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.catalog.models import Unit
from labdb.measurements.models import Fit
from labdb.quality.models import LotSummary
from labdb.quality.services import recompute_part
from labdb.stats import pointwise_band

pytestmark = pytest.mark.django_db


@pytest.fixture
def lot(part, make_lot):
    # Five units of one shape (VJ 0.8 V, M 0.5) and CJO 48..52 pF: the median curve is the
    # middle unit's curve, so its fit must give back CJO 50 pF, VJ 0.8 V, M 0.5.
    lot = make_lot("M1", [48e-12, 49e-12, 50e-12, 51e-12, 52e-12])
    recompute_part(part)
    return lot


def test_the_median_curve_is_fitted_and_recovers_the_middle_unit(lot):
    summary = LotSummary.objects.get(lot=lot)
    fit = Fit.objects.get(lot_summary=summary)
    assert (fit.version, fit.origin, fit.sweep_id) == (1, "lot", None)
    assert_allclose([fit.cjo, fit.vj, fit.m], [50e-12, 0.8, 0.5], rtol=1e-6)


def test_the_band_is_the_pointwise_10_to_90_percent_band_of_the_units(lot):
    from labdb.physics import junction_capacitance

    band = LotSummary.objects.get(lot=lot).band
    grid = np.asarray(band["bias_v"])
    curves = np.array(
        [junction_capacitance(grid, c, 0.8, 0.5) for c in (48e-12, 49e-12, 50e-12, 51e-12, 52e-12)]
    )
    # numpy's percentile (linear interpolation, Hyndman & Fan type 7) as the reference.
    assert_allclose(band["p10"], np.percentile(curves, 10, axis=0), rtol=1e-12)
    assert_allclose(band["p90"], np.percentile(curves, 90, axis=0), rtol=1e-12)
    assert_allclose(band["p50"], pointwise_band(curves)[1], rtol=1e-12)
    assert grid[0] == 0.0 and grid[-1] == 8.0


def test_unchanged_lots_get_no_new_version_and_changed_ones_do(part, lot, add_sweep):
    recompute_part(part, force=True)
    assert Fit.objects.filter(lot_summary__lot=lot).count() == 1
    add_sweep(Unit.objects.create(lot=lot, label="U06"), 60e-12)
    report = recompute_part(part)
    assert report.lot_fits == 1
    assert sorted(Fit.objects.filter(lot_summary__lot=lot).values_list("version", flat=True)) == [
        1,
        2,
    ]


def test_every_lot_model_version_has_one_created_event(part, lot, add_sweep):
    # The lot models are inserted together; each still gets the event a save would write.
    from labdb.audit.models import AuditEvent

    add_sweep(Unit.objects.create(lot=lot, label="U06"), 60e-12)
    recompute_part(part)
    ids = [str(pk) for pk in Fit.objects.filter(lot_summary__lot=lot).values_list("pk", flat=True)]
    events = AuditEvent.objects.filter(object_type="measurements.fit", object_id__in=ids)
    assert len(ids) == 2
    assert sorted(events.values_list("object_id", "action")) == sorted((i, "created") for i in ids)
