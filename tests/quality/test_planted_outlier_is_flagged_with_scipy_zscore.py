"""A unit planted 30 % low in its lot is flagged with the modified z-score scipy gives."""

import statistics

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.stats import median_abs_deviation

from labdb.physics import capacitance_of
from labdb.quality.models import Flag, LotSummary
from labdb.quality.services import recompute_part

pytestmark = pytest.mark.django_db


@pytest.fixture
def planted(part, make_lot, clean_cjos):
    cjos = clean_cjos(9, seed=7)
    cjos[4] *= 0.70  # unit U05: 30 % low, like a mislabelled or damaged part
    lot = make_lot("A1", cjos)
    recompute_part(part)
    return lot


def _c_low(lot):
    """C at the part's low reference bias (0 V) of each unit, via the physics module."""
    return np.array(
        [
            capacitance_of(u.sweeps.get().current_fit.params, 0.0)
            for u in lot.units.order_by("label")
        ]
    ).ravel()


def test_the_planted_unit_gets_the_z_score_of_the_handbook_formula(planted):
    x = _c_low(planted)
    flag = Flag.objects.get(unit__label="U05", rule="unit_zscore", figure="c_low")
    # NIST/SEMATECH e-Handbook §1.3.5.17: Mᵢ = 0.6745·(xᵢ − x̃)/MAD, with scipy's MAD (scale 1).
    # The handbook rounds Φ⁻¹(0.75) = 0.674490 to 0.6745, 1.5e-5 apart; hence rtol 2e-5.
    z_handbook = 0.6745 * (x - np.median(x)) / median_abs_deviation(x)
    assert_allclose(flag.evidence["z"], z_handbook[4], rtol=2e-5)
    # The same with the unrounded factor: (xᵢ − x̃)/MAD_normal, MAD_normal = MAD/Φ⁻¹(0.75).
    z_exact = (x - np.median(x)) / median_abs_deviation(x, scale="normal")
    assert_allclose(flag.evidence["z"], z_exact[4], rtol=1e-9)
    assert flag.evidence["z"] < -3.5 and flag.active and flag.state == "open"


def test_the_lot_spread_is_scipys_normal_scaled_mad(planted):
    x = _c_low(planted)
    stats = LotSummary.objects.get(lot=planted).figures["stats"]["c_low"]
    # scipy.stats.median_abs_deviation(scale="normal") = MAD/Φ⁻¹(0.75) ≈ 1.4826·MAD.
    assert_allclose(stats["sigma"], median_abs_deviation(x, scale="normal"), rtol=1e-12)
    assert_allclose(stats["median"], statistics.median(x), rtol=1e-12)


def test_no_other_unit_of_the_lot_is_flagged(planted):
    flagged = set(
        Flag.objects.filter(lot=planted, active=True).values_list("unit__label", flat=True)
    )
    assert flagged == {"U05"}


def test_the_planted_unit_is_also_far_from_the_median_curve(planted):
    flag = Flag.objects.get(unit__label="U05", rule="unit_curve")
    # A unit 30 % low on CJO alone sits |ln 0.7| ≈ 0.36 from the median curve at every bias
    # (closed form: same VJ and M, so the log ratio is constant), scaled by its lot median.
    x = _c_low(planted)
    assert_allclose(flag.evidence["distance"], abs(np.log(x[4] / np.median(x))), rtol=1e-9)
