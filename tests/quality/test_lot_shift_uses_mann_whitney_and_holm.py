"""A lot's units against all earlier lots' units: scipy's Mann–Whitney, Holm, and a tolerance."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.stats import mannwhitneyu
from statsmodels.stats.multitest import multipletests

from labdb.physics import capacitance_of
from labdb.quality.models import Flag, LotSummary
from labdb.quality.services import recompute_part

pytestmark = pytest.mark.django_db

FIGS = ("c_low", "c_high", "swing")


def _figures(lot):
    """C at 0 V, C at 8 V and their ratio per unit, from the fits via the physics module."""
    out = {name: [] for name in FIGS}
    for u in lot.units.order_by("label"):
        c = capacitance_of(u.sweeps.get().current_fit.params, np.array([0.0, 8.0]))
        out["c_low"].append(c[0])
        out["c_high"].append(c[1])
        out["swing"].append(c[0] / c[1])
    return out


@pytest.fixture
def history(part, make_lot, clean_cjos):
    return [make_lot(f"E{k}", clean_cjos(8, seed=10 + k)) for k in range(3)]


def _shifted_lot(make_lot, clean_cjos, factor, code):
    return make_lot(code, clean_cjos(8, seed=99) * factor)


def test_p_values_are_scipys_and_holms(part, history, make_lot, clean_cjos):
    earlier = history
    new = _shifted_lot(make_lot, clean_cjos, 1.08, "N8")
    recompute_part(part)
    between = LotSummary.objects.get(lot=new).digest["between"]["shift"]
    old = [_figures(lot) for lot in earlier]
    mine = _figures(new)
    raw = []
    for name in FIGS:
        ref = mannwhitneyu(
            mine[name], np.concatenate([o[name] for o in old]), alternative="two-sided"
        )
        assert_allclose(between[name]["p_value"], ref.pvalue, rtol=1e-12)
        raw.append(ref.pvalue)
    # Holm's step-down adjustment as statsmodels computes it.
    adjusted = multipletests(raw, method="holm")[1]
    assert_allclose([between[n]["p_holm"] for n in FIGS], adjusted, rtol=1e-12)


def test_a_significant_shift_beyond_the_tolerance_is_flagged(part, history, make_lot, clean_cjos):
    new = _shifted_lot(make_lot, clean_cjos, 1.08, "N8")
    recompute_part(part)
    flags = Flag.objects.filter(lot=new, rule="lot_shift", active=True)
    assert set(flags.values_list("figure", flat=True)) == {"c_low", "c_high"}
    assert all(f.evidence["shift_rel"] > 0.05 and f.evidence["p_holm"] < 0.05 for f in flags)


def test_a_significant_shift_inside_the_tolerance_is_not_flagged(
    part, history, make_lot, clean_cjos
):
    new = _shifted_lot(make_lot, clean_cjos, 1.03, "N3")
    recompute_part(part)
    shift = LotSummary.objects.get(lot=new).digest["between"]["shift"]["c_low"]
    assert shift["p_holm"] < 0.05 and 0.0 < shift["shift_rel"] < 0.05  # significant but small
    assert not Flag.objects.filter(lot=new, rule="lot_shift").exists()


def test_a_tighter_part_tolerance_flags_the_same_shift(part, history, make_lot, clean_cjos):
    part.shift_tolerance = 0.02
    part.save()
    new = _shifted_lot(make_lot, clean_cjos, 1.03, "N3")
    recompute_part(part)
    assert Flag.objects.filter(lot=new, rule="lot_shift", figure="c_low", active=True).exists()
