"""Mott–Schottky analysis against textbook step- and graded-junction formulas."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants, stats

from labdb.physics.errors import PhysicsInputError
from labdb.physics.profile import mott_schottky

Q = constants.elementary_charge
EPS0 = constants.epsilon_0

# Neamen, Semiconductor Physics and Devices, 4th ed., ch. 7, silicon step junction — values
# FROM MEMORY (recomputed with the textbook's formulas): Na = 1e16 cm⁻³, Nd = 1e15 cm⁻³,
# T = 300 K, ni = 1.5e10 cm⁻³, εr = 11.7, kT/q = 0.0259 V → Vbi = 0.635 V; at VR = 5 V,
# W = 2.83 µm and C′ = 3.66e-9 F/cm².
NA, ND, NI = 1e22, 1e21, 1.5e16  # [m⁻³]
EPS_R_SI = 11.7
KT_Q = 0.0259  # [V], fixed as the textbook does
N_EFF = NA * ND / (NA + ND)  # one-sided equivalent doping [m⁻³]
AREA = 1e-8  # 1e-4 cm² [m²]


def step_junction_c(v_r, n_eff=N_EFF, vbi=None, area=AREA, eps_r=EPS_R_SI):
    """C = A·√(q·ε·N/(2(Vbi + VR))): Sze & Ng ch. 2 / Neamen ch. 7 abrupt junction."""
    vbi = KT_Q * math.log(NA * ND / NI**2) if vbi is None else vbi
    eps = EPS0 * eps_r
    return area * np.sqrt(Q * eps * n_eff / (2.0 * (vbi + np.asarray(v_r))))


def test_textbook_built_in_potential():
    assert_allclose(KT_Q * math.log(NA * ND / NI**2), 0.635, atol=5e-4)


def test_it_recovers_the_textbook_step_junction():
    v = np.linspace(0.0, 10.0, 21)
    res = mott_schottky(v, step_junction_c(v), AREA, EPS_R_SI)
    assert_allclose(res.doping_m3, N_EFF, rtol=1e-10)
    assert_allclose(res.built_in_v, KT_Q * math.log(NA * ND / NI**2), rtol=1e-10)
    assert_allclose(res.built_in_v, 0.635, atol=5e-4)  # textbook, printed precision
    assert_allclose(res.r_squared, 1.0, atol=1e-12)
    assert res.n_points == 21
    # At VR = 5 V: W = 2.83 µm and C′ = 3.66e-9 F/cm² (0.366 pF on 1e-4 cm²), as printed.
    i5 = int(np.flatnonzero(res.bias_v == 5.0)[0])
    assert_allclose(res.depth_m[i5] * 1e6, 2.83, atol=0.005)
    c_per_cm2 = EPS0 * EPS_R_SI / res.depth_m[i5] * 1e-4  # C′ = ε/W, F/m² → F/cm²
    assert_allclose(c_per_cm2, 3.66e-9, atol=0.005e-9)
    assert_allclose(step_junction_c(5.0), 0.366e-12, atol=0.0005e-12)
    # A uniform junction has the same N at every depth.
    assert_allclose(res.doping_profile_m3, N_EFF, rtol=1e-9)


def test_standard_errors_match_scipy_linregress():
    rng = np.random.default_rng(11)
    v = np.linspace(0.5, 12.0, 16)[::-1]  # any order is accepted
    c = step_junction_c(v) * (1 + rng.normal(0.0, 2e-3, v.size))
    res = mott_schottky(v, c, AREA, EPS_R_SI)
    ref = stats.linregress(v, 1.0 / c**2)
    assert_allclose(res.slope, ref.slope, rtol=1e-10)
    assert_allclose(res.intercept, ref.intercept, rtol=1e-9)
    assert_allclose(res.slope_stderr, ref.stderr, rtol=1e-8)
    assert_allclose(res.intercept_stderr, ref.intercept_stderr, rtol=1e-8)
    assert_allclose(res.r_squared, ref.rvalue**2, rtol=1e-10)
    assert_allclose(res.doping_stderr_m3 / res.doping_m3, ref.stderr / ref.slope, rtol=1e-8)
    # The noisy estimates still sit near the truth, within a few standard errors.
    assert abs(res.doping_m3 - N_EFF) < 4 * res.doping_stderr_m3
    assert abs(res.built_in_v - 0.635) < 4 * res.built_in_stderr_v + 1e-3


def test_bias_range_selects_the_linear_region():
    v = np.linspace(0.0, 10.0, 41)
    c = step_junction_c(v)
    c[v < 1.0] *= 1.3  # a region that does not follow the step-junction law
    whole = mott_schottky(v, c, AREA, EPS_R_SI)
    part = mott_schottky(v, c, AREA, EPS_R_SI, bias_range=(1.0, 10.0))
    assert part.n_points == 37
    assert_allclose(part.doping_m3, N_EFF, rtol=1e-10)
    assert abs(whole.doping_m3 / N_EFF - 1) > 0.01


def test_linearly_graded_junction_profile():
    # Linearly graded junction (Sze & Ng ch. 2; Neamen ch. 7):
    # C′ = [q·a·ε²/(12(Vbi + VR))]^(1/3), W = ε/C′. Putting C′ into the one-sided formula
    # N = 2/(q·ε·d(1/C′²)/dV) gives N(W) = a·W/4 (derived by hand): the net doping at each
    # edge is a·W/2 and the series combination of two equal sides halves it.
    a = 1e26  # grading [m⁻⁴] (1e18 cm⁻⁴)
    vbi = 0.7
    eps = EPS0 * EPS_R_SI
    v = np.linspace(0.0, 10.0, 201)
    c = AREA * (Q * a * eps**2 / (12.0 * (vbi + v))) ** (1.0 / 3.0)
    res = mott_schottky(v, c, AREA, EPS_R_SI)
    assert_allclose(res.depth_m, eps * AREA / c, rtol=1e-14)
    assert_allclose(res.doping_profile_m3, a * res.depth_m / 4.0, rtol=2e-3)
    assert_allclose(res.doping_profile_m3[1:-1], a * res.depth_m[1:-1] / 4.0, rtol=5e-4)


def test_profile_is_nan_where_capacitance_stops_falling():
    v = np.linspace(0.0, 10.0, 11)
    c = step_junction_c(v)
    c[-3:] = c[-3]
    res = mott_schottky(v, c, AREA, EPS_R_SI, bias_range=(0.0, 7.0))
    assert np.all(np.isnan(res.doping_profile_m3[-2:]))
    assert np.all(np.isfinite(res.doping_profile_m3[:-3]))


@pytest.mark.parametrize(
    "args, match",
    [
        (([0.0, 1.0], [2e-12, 1e-12], AREA, 11.7), "at least 3"),
        (([0.0, 1.0, 2.0], [2e-12, 1e-12], AREA, 11.7), "equal length"),
        (([0.0, 1.0, 2.0], [2e-12, 1e-12, 0.0], AREA, 11.7), r"capacitance_f\[2\]"),
        (([0.0, math.nan, 2.0], [3e-12, 2e-12, 1e-12], AREA, 11.7), r"bias_v\[1\]"),
        (([0.0, 1.0, 2.0], [3e-12, 2e-12, 1e-12], 0.0, 11.7), "area_m2"),
        (([0.0, 1.0, 2.0], [3e-12, 2e-12, 1e-12], AREA, -1.0), "eps_r"),
        (([0.0, 1.0, 1.0], [3e-12, 2e-12, 1e-12], AREA, 11.7), "repeats"),
        (([0.0, 1.0, 2.0], [1e-12, 2e-12, 3e-12], AREA, 11.7), "does not rise"),
    ],
)
def test_bad_input_is_refused(args, match):
    with pytest.raises(PhysicsInputError, match=match):
        mott_schottky(*args)


def test_a_bias_range_with_too_few_points_is_refused():
    v = np.linspace(0.0, 10.0, 11)
    with pytest.raises(PhysicsInputError, match="holds 2 points"):
        mott_schottky(v, step_junction_c(v), AREA, EPS_R_SI, bias_range=(4.5, 6.5))
    with pytest.raises(PhysicsInputError, match="bias_range"):
        mott_schottky(v, step_junction_c(v), AREA, EPS_R_SI, bias_range=(6.0, 4.0))
