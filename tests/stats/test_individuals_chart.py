"""Individuals (X–mR) chart constants and limits against handbook tables and integration."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import dblquad, quad
from scipy.stats import norm

from labdb.stats import (
    D2_MR,
    D4_MR,
    E2_INDIVIDUALS,
    StatsInputError,
    individuals_limits,
)


def d2_by_integration(n):
    """E[range of n standard normals] = ∫ 1 − Φ(x)ⁿ − (1 − Φ(x))ⁿ dx (Tippett, 1925)."""
    value, _ = quad(lambda x: 1.0 - norm.cdf(x) ** n - norm.sf(x) ** n, -np.inf, np.inf)
    return value


def test_d2_by_integration_reproduces_the_handbook_table():
    # d2 for n = 2..5: 1.128, 1.693, 2.059, 2.326 (e-Handbook §6.3.2; Montgomery, Appendix;
    # REFERENCES.md lists 1.1284, 1.6926, 2.0588, 2.3259). This checks the integrator itself.
    got = [d2_by_integration(n) for n in (2, 3, 4, 5)]
    assert_allclose(got, [1.1284, 1.6926, 2.0588, 2.3259], atol=6e-5)


def test_d2_for_moving_ranges_is_two_over_root_pi():
    # For n = 2 the range is |X1 − X2| = √2·|Z|, whose mean is 2/√π exactly.
    assert_allclose(D2_MR, d2_by_integration(2), rtol=1e-9)
    assert_allclose(D2_MR, 2 / math.sqrt(math.pi), rtol=1e-15)
    # Tabled 2.66 = 3/d2 (e-Handbook §6.3.2; Montgomery).
    assert_allclose(E2_INDIVIDUALS, 2.66, atol=2e-3)
    assert_allclose(E2_INDIVIDUALS, 2.6587, atol=5e-5)


def test_d4_for_moving_ranges_matches_integration_and_the_table():
    # D4 = 1 + 3·d3/d2 with d3² = E[R²] − d2²; E[R²] from the density of the range of two
    # normals, f(w) = 2∫φ(x)φ(x + w)dx for w ≥ 0 (order-statistics density, n = 2).
    second_moment, _ = dblquad(
        lambda x, w: w**2 * 2.0 * norm.pdf(x) * norm.pdf(x + w), 0.0, 14.0, -12.0, 12.0
    )
    d2 = d2_by_integration(2)
    d4 = 1.0 + 3.0 * math.sqrt(second_moment - d2**2) / d2
    assert_allclose(D4_MR, d4, rtol=1e-7)
    # Tabled D4 for n = 2: 3.267 (e-Handbook §6.3.2; Montgomery); REFERENCES.md 3.2665.
    assert_allclose(D4_MR, 3.267, atol=6e-4)


def test_a_seeded_simulation_agrees_with_d2_and_d4():
    rng = np.random.default_rng(20240611)
    pairs = rng.standard_normal((200_000, 2))
    ranges = np.abs(pairs[:, 0] - pairs[:, 1])
    # Standard errors are about 0.002 for the mean range and 0.0015 for its sd: 5σ bounds.
    assert_allclose(ranges.mean(), D2_MR, atol=0.01)
    d4_sim = 1.0 + 3.0 * ranges.std(ddof=1) / ranges.mean()
    assert_allclose(d4_sim, D4_MR, atol=0.03)


def test_limits_on_a_hand_worked_baseline():
    # Hand-worked: x̄ = 60/5 = 12; moving ranges 2, 1, 3, 1 -> MR̄ = 1.75.
    # With the tabled constants: UCL = 12 + 2.66·1.75 = 16.655, LCL = 7.345,
    # σ = 1.75/1.128 = 1.5514, mR UCL = 3.267·1.75 = 5.717.
    lim = individuals_limits([10, 12, 11, 14, 13])
    assert lim.center == 12.0
    assert_allclose(lim.mr_bar, 1.75, rtol=1e-15)
    # 2.66 is 3/d2 = 2.6587 rounded, so these differ by up to 0.0013·1.75 = 0.0023.
    assert_allclose([lim.ucl, lim.lcl], [16.655, 7.345], rtol=0, atol=2.5e-3)
    assert_allclose(lim.sigma, 1.5514, rtol=5e-4)
    assert_allclose(lim.mr_ucl, 5.717, rtol=3e-4)
    # With the exact constants the limits sit at x̄ ± 3σ, σ = MR̄·√π/2.
    sigma = 1.75 * math.sqrt(math.pi) / 2
    assert_allclose([lim.sigma, lim.ucl, lim.lcl], [sigma, 12 + 3 * sigma, 12 - 3 * sigma])


def test_limits_scale_and_shift_with_the_data():
    rng = np.random.default_rng(5)
    x = rng.normal(size=30)
    base = individuals_limits(x)
    moved = individuals_limits(50e-12 + 2e-12 * x)
    assert_allclose(moved.center, 50e-12 + 2e-12 * base.center, rtol=1e-12)
    assert_allclose(
        [moved.sigma, moved.mr_bar, moved.mr_ucl],
        [2e-12 * base.sigma, 2e-12 * base.mr_bar, 2e-12 * base.mr_ucl],
        rtol=1e-12,
    )


def test_a_flat_baseline_gives_zero_width_limits():
    lim = individuals_limits([4.0, 4.0, 4.0])
    assert (lim.center, lim.sigma, lim.ucl, lim.lcl, lim.mr_ucl) == (4.0, 0.0, 4.0, 4.0, 0.0)


@pytest.mark.parametrize("baseline", [[], [1.0], [1.0, 2.0]])
def test_fewer_than_three_points_are_refused_naming_the_count(baseline):
    with pytest.raises(StatsInputError, match=f"baseline has {len(baseline)} point"):
        individuals_limits(baseline)


def test_a_missing_value_in_the_baseline_is_refused_with_its_index():
    with pytest.raises(StatsInputError, match=r"baseline\[2\] is nan"):
        individuals_limits([1.0, 2.0, float("nan"), 3.0])
