"""Rank test of a new lot against earlier lots, Holm correction, and the shifted-figure rule."""

import itertools
import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.stats import norm
from statsmodels.stats.multitest import multipletests

from labdb.stats import RankTest, StatsInputError, holm, rank_shift, shifted_figures


@pytest.mark.parametrize("m", [1, 2, 3, 5, 10, 17, 50, 200])
@pytest.mark.parametrize("seed", [0, 1, 2])
def test_holm_matches_statsmodels(m, seed):
    rng = np.random.default_rng(seed * 1000 + m)
    # Cubed uniforms give many small p-values; rounding some to 2 decimals adds ties; the
    # large ones exercise the cap at 1.
    p = rng.uniform(size=m) ** 3
    p[: m // 3] = np.round(p[: m // 3], 2)
    expected = multipletests(p, alpha=0.05, method="holm")[1]
    assert_allclose(holm(p), expected, rtol=1e-12, atol=0)


def test_holm_on_a_hand_worked_family():
    # Holm (1979), m = 4. Sorted: 0.005·4 = 0.02, 0.01·3 = 0.03, 0.03·2 = 0.06,
    # 0.04·1 = 0.04 -> running maximum 0.06. Back in input order:
    assert_allclose(holm([0.01, 0.04, 0.03, 0.005]), [0.03, 0.06, 0.06, 0.02], rtol=1e-12)
    assert_allclose(holm([0.5, 0.9]), [1.0, 1.0], rtol=0, atol=0)
    assert holm([]).shape == (0,)


def test_holm_keeps_the_order_of_the_raw_p_values():
    rng = np.random.default_rng(11)
    p = rng.uniform(size=40) ** 2
    adj = holm(p)
    order = np.argsort(p)
    assert np.all(np.diff(adj[order]) >= 0)
    assert np.all(adj >= p) and np.all(adj <= 1.0)


@pytest.mark.parametrize(
    ("p", "fragment"),
    [([0.1, 1.2], "p_values[1] is 1.2"), ([-0.01], "p_values[0] is -0.01"), ([np.nan], "nan")],
)
def test_holm_refuses_values_that_are_not_p_values(p, fragment):
    with pytest.raises(StatsInputError) as err:
        holm(p)
    assert fragment in str(err.value)


def exact_two_sided_p(u, n1, n2):
    """Two-sided exact p of Mann–Whitney U (no ties) by enumerating every rank assignment."""
    n = n1 + n2
    us = [sum(ranks) - n1 * (n1 + 1) / 2 for ranks in itertools.combinations(range(1, n + 1), n1)]
    upper = sum(v >= u for v in us) / len(us)
    lower = sum(v <= u for v in us) / len(us)
    return min(1.0, 2 * min(upper, lower))


def test_the_rank_test_on_a_hand_worked_small_example():
    new = [3.1, 4.2, 5.0, 6.3]
    earlier = [1.0, 2.2, 3.5, 4.0, 4.1]
    # Hand count of pairs with new > earlier: 3.1 beats 2, the others beat all 5 -> U = 17
    # of n1·n2 = 20. Exact null: of the C(9, 4) = 126 rank sets, U = 20, 19, 18, 17 occur
    # 1, 1, 2, 3 times -> P(U ≥ 17) = 7/126, two-sided p = 14/126 = 0.1111.
    res = rank_shift(new, earlier)
    assert res.statistic == 17.0
    assert_allclose(res.p_value, 14 / 126, rtol=1e-12)
    assert_allclose(res.p_value, exact_two_sided_p(17, 4, 5), rtol=1e-12)
    assert (res.n_new, res.n_earlier) == (4, 5)
    # Medians 4.6 and 3.5: shift (4.6 − 3.5)/3.5 = 0.3143.
    assert_allclose(res.median_shift_rel, 1.1 / 3.5, rtol=1e-12)


def test_the_rank_test_with_ties_uses_the_corrected_normal_approximation():
    new = [2, 3, 3, 4, 5, 5, 6]
    earlier = [1, 1, 2, 2, 3, 4, 4, 5]
    res = rank_shift(new, earlier)
    # Normal approximation with tie-corrected variance and continuity correction (Conover,
    # Practical Nonparametric Statistics, from memory), written out here:
    n1, n2 = len(new), len(earlier)
    u = sum((a > b) + 0.5 * (a == b) for a in new for b in earlier)
    values = new + earlier
    ties = sum(t**3 - t for t in (values.count(v) for v in set(values)))
    n = n1 + n2
    var = n1 * n2 / 12 * ((n + 1) - ties / (n * (n - 1)))
    z = (abs(u - n1 * n2 / 2) - 0.5) / math.sqrt(var)
    assert res.statistic == u
    assert_allclose(res.p_value, 2 * norm.sf(z), rtol=1e-10)


def test_the_shift_is_relative_to_the_size_of_the_earlier_median():
    assert_allclose(rank_shift([-1.1, -1.1], [-1.0, -1.0]).median_shift_rel, -0.1, rtol=1e-12)
    assert rank_shift([1.0, 2.0], [-1.0, 0.0, 1.0]).median_shift_rel == math.inf
    assert rank_shift([0.0, 0.0], [-1.0, 0.0, 1.0]).median_shift_rel == 0.0


def test_identical_samples_show_no_evidence_of_a_shift():
    res = rank_shift([2.0, 2.0, 2.0], [2.0, 2.0, 2.0, 2.0])
    assert res.p_value == 1.0 and res.median_shift_rel == 0.0


def test_the_rank_test_refuses_an_empty_or_missing_sample():
    with pytest.raises(StatsInputError, match="earlier: needs at least 1"):
        rank_shift([1.0], [])
    with pytest.raises(StatsInputError, match=r"new\[0\] is nan"):
        rank_shift([float("nan")], [1.0])


def _test(p, shift):
    return RankTest(statistic=0.0, p_value=p, n_new=5, n_earlier=20, median_shift_rel=shift)


def test_a_figure_is_flagged_only_when_significant_after_holm_and_beyond_tolerance():
    tests = {
        "big_shift": _test(0.001, 0.2),
        "big_drop": _test(0.002, -0.2),
        "tiny_shift": _test(0.001, 0.01),
        "raw_only_up": _test(0.03, 0.3),
        "raw_only_down": _test(0.04, -0.3),
    }
    # Holm, m = 5: 0.001·5 = 0.005, 0.001·4 -> 0.005, 0.002·3 = 0.006, 0.03·2 = 0.06,
    # 0.04·1 -> 0.06. The last two pass at α = 0.05 uncorrected but not after Holm.
    assert shifted_figures(tests) == {
        "big_shift": True,
        "big_drop": True,
        "tiny_shift": False,
        "raw_only_up": False,
        "raw_only_down": False,
    }
    assert shifted_figures({"raw_only_up": tests["raw_only_up"]}) == {"raw_only_up": True}
    assert shifted_figures(tests, tolerance=0.005)["tiny_shift"] is True
    assert shifted_figures({}) == {}


def test_both_bounds_are_strict():
    # p exactly at α, or a shift exactly at the tolerance, is not enough.
    assert shifted_figures({"x": _test(0.05, 0.2)}) == {"x": False}
    assert shifted_figures({"x": _test(0.001, 0.05)}) == {"x": False}
    assert shifted_figures({"x": _test(0.001, -0.05)}) == {"x": False}


@pytest.mark.parametrize(
    ("kwargs", "fragment"),
    [({"alpha": 0.0}, "alpha"), ({"alpha": 1.5}, "alpha"), ({"tolerance": -0.1}, "tolerance")],
)
def test_bad_flagging_settings_are_refused(kwargs, fragment):
    with pytest.raises(StatsInputError, match=fragment):
        shifted_figures({"x": _test(0.01, 0.1)}, **kwargs)


def test_only_rank_tests_can_be_flagged():
    with pytest.raises(StatsInputError, match="tests\\['x'\\]"):
        shifted_figures({"x": 0.01})
