"""Curve distance (RMS log ratio) and pointwise percentile bands on hand-made C–V curves."""

import math
import statistics
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.stats import StatsInputError, curve_distance, pointwise_band

# A junction-like reference curve on four biases [F] (made up for the test).
C_REF = np.array([100e-12, 60e-12, 40e-12, 30e-12])


def test_a_uniform_ratio_gives_its_log_as_the_distance():
    # c = c_ref·e^0.1 everywhere: every ln ratio is 0.1, so the RMS is 0.1 (by definition).
    assert_allclose(curve_distance(C_REF * math.exp(0.1), C_REF), 0.1, rtol=1e-12)
    assert_allclose(curve_distance(C_REF, C_REF), 0.0, atol=0)


def test_mixed_ratios_give_the_root_mean_square_of_the_logs():
    # Hand-worked: ln ratios 0.1, −0.1, 0.2, 0 -> √((0.01 + 0.01 + 0.04 + 0)/4) = √0.015.
    curve = C_REF * np.exp([0.1, -0.1, 0.2, 0.0])
    assert_allclose(curve_distance(curve, C_REF), math.sqrt(0.015), rtol=1e-12)
    # ln(a/b) = −ln(b/a): the distance is symmetric.
    assert_allclose(curve_distance(C_REF, curve), math.sqrt(0.015), rtol=1e-12)


def test_grid_points_missing_from_either_curve_are_left_out():
    curve = C_REF * np.exp([0.1, -0.1, 0.2, 0.0])
    curve[2] = np.nan
    # Remaining ln ratios 0.1, −0.1, 0 -> √(0.02/3).
    assert_allclose(curve_distance(curve, C_REF), math.sqrt(0.02 / 3), rtol=1e-12)
    ref = C_REF.copy()
    ref[0] = np.nan
    # Remaining ln ratios −0.1, 0.2, 0 -> √(0.05/3).
    assert_allclose(
        curve_distance(C_REF * np.exp([0.1, -0.1, 0.2, 0.0]), ref), math.sqrt(0.05 / 3), rtol=1e-12
    )


def test_several_curves_get_one_distance_each():
    curves = np.vstack([C_REF * math.exp(0.1), C_REF * np.exp([0.1, -0.1, 0.2, 0.0]), C_REF])
    assert_allclose(curve_distance(curves, C_REF), [0.1, math.sqrt(0.015), 0.0], rtol=1e-12)


@pytest.mark.parametrize(
    ("curve", "ref", "fragment"),
    [
        ([1e-12, -1e-12, 1e-12, 1e-12], C_REF, "c_curve[1] is -1e-12"),
        ([1e-12, 1e-12, 0.0, 1e-12], C_REF, "c_curve[2] is 0.0"),
        ([1e-12, 1e-12, 1e-12, 1e-12], [1e-12, 1e-12, np.inf, 1e-12], "c_reference[2] is inf"),
        ([1e-12, 1e-12, 1e-12], C_REF, "same bias grid"),
        ([np.nan, np.nan, 1e-12, 1e-12], [1e-12, 1e-12, np.nan, np.nan], "no grid point"),
        ([[1e-12] * 4, [np.nan] * 4], C_REF, "c_curve[1] shares no grid point"),
    ],
)
def test_bad_curves_are_refused_with_a_located_message(curve, ref, fragment):
    with pytest.raises(StatsInputError) as err:
        curve_distance(curve, ref)
    assert fragment in str(err.value)


def test_the_band_interpolates_percentiles_between_order_statistics():
    # Hand-worked, Hyndman & Fan type 7 (position h = (m − 1)·p): for 1..5,
    # p10 = 1 + 0.4·(2 − 1) = 1.4, median 3, p90 = 4 + 0.6·(5 − 4) = 4.6.
    curves = np.array([[1, 10], [2, 20], [3, 30], [4, 40], [5, 50]], dtype=float)
    low, med, high = pointwise_band(curves)
    assert_allclose(low, [1.4, 14.0], rtol=1e-12)
    assert_allclose(med, [3.0, 30.0], rtol=1e-12)
    assert_allclose(high, [4.6, 46.0], rtol=1e-12)


def test_the_band_agrees_with_the_standard_library_inclusive_quantiles():
    # statistics.quantiles(method="inclusive") is the same type-7 definition, coded separately.
    rng = np.random.default_rng(7)
    curves = rng.lognormal(mean=-25.0, sigma=0.2, size=(23, 6))
    low, med, high = pointwise_band(curves, lower=10, upper=90)
    for j in range(curves.shape[1]):
        deciles = statistics.quantiles(curves[:, j].tolist(), n=10, method="inclusive")
        assert_allclose([low[j], high[j]], [deciles[0], deciles[-1]], rtol=1e-12)
        assert_allclose(med[j], statistics.median(curves[:, j].tolist()), rtol=1e-12)


def test_missing_points_are_ignored_and_an_empty_column_gives_nan_quietly():
    # Column 0 without its NaN is 1, 2, 4, 5: p10 at h = 0.3 -> 1.3; median 3; p90 at h = 2.7
    # -> 4.7. Column 1 has no data at all.
    curves = np.array([[1, np.nan], [2, np.nan], [np.nan, np.nan], [4, np.nan], [5, np.nan]])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        low, med, high = pointwise_band(curves)
    assert_allclose(low[0], 1.3, rtol=1e-12)
    assert_allclose(med[0], 3.0, rtol=1e-12)
    assert_allclose(high[0], 4.7, rtol=1e-12)
    assert np.isnan([low[1], med[1], high[1]]).all()


def test_a_custom_band_uses_the_percentiles_asked_for():
    curves = np.arange(1.0, 6.0)[:, None]
    low, _, high = pointwise_band(curves, lower=25, upper=75)
    # Type 7: h = 4·0.25 = 1 -> 2; h = 3 -> 4.
    assert_allclose([low[0], high[0]], [2.0, 4.0], rtol=1e-12)


@pytest.mark.parametrize(
    ("curves", "lower", "upper", "fragment"),
    [
        ([1.0, 2.0, 3.0], 10, 90, "shape (m, n)"),
        (np.empty((0, 3)), 10, 90, "shape (m, n)"),
        ([[1.0, np.inf], [2.0, 3.0]], 10, 90, "curves[0, 1] is inf"),
        ([[1.0], [2.0]], 90, 10, "lower ≤ upper"),
        ([[1.0], [2.0]], -5, 90, "0 ≤ lower"),
        ([[1.0], [2.0]], 10, 101, "≤ 100"),
    ],
)
def test_bad_band_input_is_refused(curves, lower, upper, fragment):
    with pytest.raises(StatsInputError) as err:
        pointwise_band(curves, lower=lower, upper=upper)
    assert fragment in str(err.value)
