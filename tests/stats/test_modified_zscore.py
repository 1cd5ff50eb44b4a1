"""Modified z-scores and MAD outliers against the e-Handbook definition and scipy."""

import math
import re
import statistics

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import quad
from scipy.stats import median_abs_deviation, norm

from labdb.stats import (
    MAD_QUANTILE,
    MAD_TO_SIGMA,
    MEANAD_TO_SIGMA,
    StatsInputError,
    modified_zscores,
    outliers,
    robust_center_spread,
)


def handbook_modified_z(values):
    """NIST/SEMATECH e-Handbook §1.3.5.17: Mᵢ = 0.6745·(xᵢ − x̃)/MAD, MAD = median|xᵢ − x̃|.

    Written with the standard library only, so it shares no code with labdb.stats.
    """
    med = statistics.median(values)
    mad = statistics.median(abs(v - med) for v in values)
    return [0.6745 * (v - med) / mad for v in values]


def test_the_constant_is_the_upper_quartile_of_the_standard_normal():
    # Iglewicz & Hoaglin's 0.6745 is Φ⁻¹(0.75); REFERENCES gives 0.674490.
    assert round(float(norm.ppf(0.75)), 4) == 0.6745
    assert_allclose(MAD_QUANTILE, norm.ppf(0.75), rtol=1e-14)
    # 1.4826 is the MAD-to-σ factor printed in the e-Handbook and used by scipy.
    assert_allclose(MAD_TO_SIGMA, 1.4826, atol=5e-5)


@pytest.mark.parametrize("n", [5, 6, 11, 40, 101])
def test_scores_match_the_handbook_definition(n):
    rng = np.random.default_rng(1000 + n)
    x = rng.normal(5e-12, 3e-13, size=n)
    # The handbook rounds Φ⁻¹(0.75) to 0.6745 (1.5e-5 relative); we use the exact value.
    assert_allclose(modified_zscores(x), handbook_modified_z(x.tolist()), rtol=2e-5, atol=1e-12)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_scores_match_scipy_mad_with_normal_scale(seed):
    rng = np.random.default_rng(seed)
    x = rng.standard_t(df=3, size=37)
    # Reference implementation named in REFERENCES.md: σ = median_abs_deviation(scale="normal").
    expected = (x - np.median(x)) / median_abs_deviation(x, scale="normal")
    assert_allclose(modified_zscores(x), expected, rtol=1e-12, atol=1e-14)
    med, sigma = robust_center_spread(x)
    assert_allclose(med, np.median(x), rtol=1e-15)
    assert_allclose(sigma, median_abs_deviation(x, scale="normal"), rtol=1e-12)


def test_a_hand_worked_sample_flags_its_one_outlier():
    # Hand-worked: median 10.0; |deviations| 0, .1, .1, .2, .2, 0, 3.0 -> MAD = 0.1.
    # M(13.0) = 0.6745·3.0/0.1 = 20.235; M(10.2) = 1.349; M(9.8) = −1.349.
    x = [10.0, 10.1, 9.9, 10.2, 9.8, 10.0, 13.0]
    z = modified_zscores(x)
    assert_allclose(z, [0.0, 0.6745, -0.6745, 1.349, -1.349, 0.0, 20.235], rtol=1e-4, atol=1e-9)
    assert outliers(x).tolist() == [False] * 6 + [True]
    med, sigma = robust_center_spread(x)
    assert_allclose([med, sigma], [10.0, 0.14826], rtol=1e-4)


def test_the_cut_off_is_a_strict_bound_on_the_absolute_score():
    # Hand-worked: median 0 and MAD 1 (|dev| sorted 0,0,1,1,1,1,1,5,5.3), so M = 0.67449·x:
    # M(5.0) = 3.372 stays, M(5.3) = 3.575 goes; 3.5 ↔ x = 5.189.
    x = [-1, -1, -1, 0, 0, 1, 1, 5.0, 5.3]
    assert_allclose(modified_zscores(x)[-2:], [3.3724, 3.5748], rtol=1e-4)
    assert outliers(x).tolist() == [False] * 8 + [True]
    # Lower the threshold between |M| of ±1 (0.6745) and 3.372: both signs are caught.
    flagged = outliers(x, threshold=0.6)
    assert flagged.tolist() == [True, True, True, False, False, True, True, True, True]
    # Between 0.6745 and 3.372 only the two large values remain.
    assert outliers(x, threshold=0.7).tolist() == [False] * 7 + [True, True]


def test_a_zero_mad_falls_back_to_the_mean_absolute_deviation():
    # Five of seven equal -> MAD = 0. Fallback (IBM's documented practice, from memory):
    # M = (x − median)/(1.253314·MeanAD), MeanAD = (1 + 4)/7 about the median 5.
    # M(6) = 7/(5·1.253314) = 1.1170; M(9) = 28/(5·1.253314) = 4.4681.
    x = [5, 5, 5, 5, 5, 6, 9]
    assert_allclose(modified_zscores(x), [0, 0, 0, 0, 0, 1.1170, 4.4681], rtol=1e-4, atol=0)
    # The same with the 7-digit constant as printed: agreement to its rounding (4e-7).
    assert_allclose(modified_zscores(x)[5:], [7 / (5 * 1.253314), 28 / (5 * 1.253314)], rtol=1e-6)
    assert outliers(x).tolist() == [False] * 6 + [True]


def test_the_fallback_factor_turns_a_mean_absolute_deviation_into_sigma():
    # For a normal variable E|Z| = ∫|z|φ(z)dz = √(2/π); 1/E|Z| = 1.253314 (IBM's constant).
    mean_abs, _ = quad(lambda z: abs(z) * norm.pdf(z), -np.inf, np.inf)
    assert_allclose(MEANAD_TO_SIGMA, 1.0 / mean_abs, rtol=1e-9)
    assert_allclose(MEANAD_TO_SIGMA, 1.253314, atol=5e-7)
    assert_allclose(MEANAD_TO_SIGMA, math.sqrt(math.pi / 2), rtol=1e-15)


def test_identical_values_have_zero_scores_and_no_outliers():
    x = [3e-12] * 6
    assert_allclose(modified_zscores(x), np.zeros(6), atol=0)
    assert not outliers(x).any()
    assert robust_center_spread(x) == (3e-12, 0.0)


def test_a_single_value_is_its_own_center():
    assert_allclose(modified_zscores([7.0]), [0.0], atol=0)
    assert robust_center_spread([7.0]) == (7.0, 0.0)


@pytest.mark.parametrize(
    ("bad", "fragment"),
    [
        ([1.0, float("nan"), 2.0], "x[1] is nan"),
        ([1.0, 2.0, float("inf")], "x[2] is inf"),
        ([], "at least 1"),
        ([[1.0, 2.0], [3.0, 4.0]], "1-D"),
        (["a", "b"], "numbers"),
    ],
)
def test_bad_samples_are_refused_with_a_located_message(bad, fragment):
    for func in (modified_zscores, outliers, robust_center_spread):
        with pytest.raises(StatsInputError, match=re.escape(fragment)):
            func(bad)


@pytest.mark.parametrize("threshold", [0.0, -1.0, float("nan")])
def test_a_threshold_that_is_not_positive_is_refused(threshold):
    with pytest.raises(StatsInputError, match="threshold"):
        outliers([1.0, 2.0, 3.0], threshold=threshold)
