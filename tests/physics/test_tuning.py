"""Swing, tank frequency, tuning slope, bias for a frequency, band coverage and centring."""

import math
from types import SimpleNamespace

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.errors import PhysicsInputError
from labdb.physics.tuning import (
    band_coverage,
    bias_for_frequency,
    capacitance_ratio,
    fixed_capacitance_to_centre,
    tank_frequency,
    tuning_slope,
)

# Hand-computed (Thomson's formula): 10 µH with 100 pF → 1/(2π·√1e-15 s²) = 5.0329 MHz.
F_10UH_100PF = 5.0329e6
ABRUPT = {"cjo": 100e-12, "vj": 0.8, "m": 0.5}
PART = {"cjo": 20e-12, "vj": 0.75, "m": 0.45, "cp": 1e-12}
L = 10e-6


def test_tank_frequency_matches_thomson_by_hand():
    # At 0 V the junction gives CJO = 100 pF.
    assert_allclose(tank_frequency(0.0, ABRUPT, L), F_10UH_100PF, rtol=2e-5)
    # 100 pF behind a 100 pF coupling capacitor is 50 pF; with 50 pF fixed the tank has 100 pF.
    assert_allclose(tank_frequency(0.0, ABRUPT, L, 50e-12, 100e-12), F_10UH_100PF, rtol=2e-5)
    # At V_R = 3·VJ an abrupt junction (M = 0.5) gives CJO/√4 = 50 pF; plus 50 pF fixed.
    assert_allclose(tank_frequency(2.4, ABRUPT, L, 50e-12), F_10UH_100PF, rtol=2e-5)


def test_tank_frequency_keeps_the_shape_of_the_bias():
    f = tank_frequency(np.zeros((2, 3)), ABRUPT, L)
    assert f.shape == (2, 3)


def test_it_accepts_a_fit_object_with_params():
    fit = SimpleNamespace(params=dict(ABRUPT))
    assert_allclose(tank_frequency(1.0, fit, L), tank_frequency(1.0, ABRUPT, L), rtol=0)


@pytest.mark.parametrize("coupling", [None, 150e-12])
@pytest.mark.parametrize("fixed", [0.0, 33e-12])
def test_slope_matches_central_differences(coupling, fixed):
    # Reverse biases and one forward point beyond FC·VJ = 0.375 V (SPICE linear extension).
    v = np.array([-0.6, -0.1, 0.0, 1.0, 4.5, 9.0, 25.0])
    h = 1e-5
    numeric = (
        tank_frequency(v + h, PART, L, fixed, coupling)
        - tank_frequency(v - h, PART, L, fixed, coupling)
    ) / (2 * h)
    assert_allclose(tuning_slope(v, PART, L, fixed, coupling), numeric, rtol=1e-6)
    assert np.all(numeric > 0)


@pytest.mark.parametrize("coupling", [None, 220e-12])
def test_bias_for_frequency_inverts_tank_frequency(coupling):
    biases = np.array([-0.2, 0.3, 2.0, 7.5, 11.9])
    targets = tank_frequency(biases, PART, L, 10e-12, coupling)
    found = [
        bias_for_frequency(t, PART, L, 10e-12, coupling, window_v=(-0.5, 12.0)) for t in targets
    ]
    assert_allclose(found, biases, atol=1e-9)


def test_bias_for_frequency_says_none_outside_the_window():
    f_lo, f_hi = tank_frequency([0.0, 9.0], PART, L)
    assert bias_for_frequency(f_lo * 0.999, PART, L, window_v=(0.0, 9.0)) is None
    assert bias_for_frequency(f_hi * 1.001, PART, L, window_v=(0.0, 9.0)) is None
    assert bias_for_frequency(f_lo, PART, L, window_v=(0.0, 9.0)) == 0.0
    assert bias_for_frequency(f_hi, PART, L, window_v=(0.0, 9.0)) == 9.0


def test_band_coverage_claims_hold_when_checked():
    window = (0.0, 9.0)
    f_min, f_max = tank_frequency(window, PART, L, 22e-12, None)
    lo, hi = f_min * 1.02, f_max * 0.97
    cov = band_coverage(PART, L, 22e-12, None, window, lo, hi)
    assert cov.covers
    assert_allclose([cov.f_min_hz, cov.f_max_hz], [f_min, f_max], rtol=1e-14)
    assert_allclose(tank_frequency(cov.bias_low_v, PART, L, 22e-12), lo, rtol=1e-11)
    assert_allclose(tank_frequency(cov.bias_high_v, PART, L, 22e-12), hi, rtol=1e-11)
    assert window[0] < cov.bias_low_v < cov.bias_high_v < window[1]
    assert_allclose(cov.centre_hz, math.sqrt(lo * hi), rtol=1e-15)
    v_c = bias_for_frequency(cov.centre_hz, PART, L, 22e-12, window_v=window)
    assert_allclose(cov.slope_at_centre_hz_per_v, tuning_slope(v_c, PART, L, 22e-12), rtol=1e-12)


def test_band_coverage_reports_a_band_it_cannot_reach():
    window = (0.0, 9.0)
    f_min, f_max = tank_frequency(window, PART, L)
    cov = band_coverage(PART, L, 0.0, None, window, f_min * 1.01, f_max * 1.05)
    assert not cov.covers
    assert cov.bias_high_v is None
    assert_allclose(tank_frequency(cov.bias_low_v, PART, L), f_min * 1.01, rtol=1e-11)


@pytest.mark.parametrize("coupling", [None, 100e-12])
def test_fixed_capacitance_centres_the_band(coupling):
    window = (0.0, 9.0)
    lo, hi = 9.0e6, 9.6e6
    c_fixed = fixed_capacitance_to_centre(PART, L, coupling, window, lo, hi)
    assert c_fixed is not None and c_fixed > 0
    f_min, f_max = tank_frequency(window, PART, L, c_fixed, coupling)
    assert_allclose(math.sqrt(f_min * f_max), math.sqrt(lo * hi), rtol=1e-12)
    assert f_min <= lo and hi <= f_max
    assert band_coverage(PART, L, c_fixed, coupling, window, lo, hi).covers


def test_no_fixed_capacitance_for_a_band_wider_than_the_part_tunes():
    f_min, f_max = tank_frequency([0.0, 9.0], PART, L)
    value, reason = fixed_capacitance_to_centre(
        PART, L, None, (0.0, 9.0), 8e6, 8e6 * f_max / f_min * 1.01, return_reason=True
    )
    assert value is None
    assert "wider" in reason


def test_no_fixed_capacitance_when_centring_needs_a_negative_one():
    f_min, f_max = tank_frequency([0.0, 9.0], PART, L)
    value, reason = fixed_capacitance_to_centre(
        PART, L, None, (0.0, 9.0), f_min * 1.3, f_max * 1.2, return_reason=True
    )
    assert value is None
    assert "negative" in reason


def test_no_fixed_capacitance_when_centring_narrows_the_range_too_much():
    f_min, f_max = tank_frequency([0.0, 9.0], PART, L)
    ratio = 0.98 * f_max / f_min  # just inside the bare ratio
    value, reason = fixed_capacitance_to_centre(
        PART, L, None, (0.0, 9.0), 3e6, 3e6 * ratio, return_reason=True
    )
    assert value is None
    assert "narrows" in reason
    assert fixed_capacitance_to_centre(PART, L, None, (0.0, 9.0), 3e6, 3e6 * ratio) is None


def test_capacitance_ratio_equals_the_closed_form():
    # C(V) = CJO·(1 + V/VJ)^(−M) (SPICE diode model): ratio = ((1 + v2/VJ)/(1 + v1/VJ))^M.
    p = {"cjo": 50e-12, "vj": 0.7, "m": 0.5}
    assert_allclose(capacitance_ratio(p, 0.0, 9.0), (1 + 9.0 / 0.7) ** 0.5, rtol=1e-14)
    assert_allclose(
        capacitance_ratio(p, 1.0, 4.0), math.sqrt((1 + 4 / 0.7) / (1 + 1 / 0.7)), rtol=1e-14
    )
    # Package capacitance adds to both ends and shrinks the swing.
    c1 = PART["cjo"] * (1 + 0.5 / 0.75) ** -0.45 + PART["cp"]
    c2 = PART["cjo"] * (1 + 9.0 / 0.75) ** -0.45 + PART["cp"]
    assert_allclose(capacitance_ratio(PART, 0.5, 9.0), c1 / c2, rtol=1e-14)


@pytest.mark.parametrize(
    "call, match",
    [
        (lambda: capacitance_ratio(PART, 5.0, 1.0), "window_v"),
        (lambda: tank_frequency(1.0, PART, 0.0), "inductance_h"),
        (lambda: tank_frequency(1.0, PART, L, -1e-12), "fixed_f"),
        (lambda: tank_frequency(1.0, PART, L, 0.0, 0.0), "coupling_f"),
        (lambda: tank_frequency([1.0, math.nan], PART, L), r"bias_v\[1\]"),
        (lambda: bias_for_frequency(5e6, PART, L, window_v=(3.0,)), "window_v"),
        (lambda: band_coverage(PART, L, 0.0, None, (0, 9), 9e6, 8e6), "f_low_hz < f_high_hz"),
        (lambda: tank_frequency(1.0, {"cjo": 1e-12, "vj": 0.7}, L), "'m'"),
    ],
)
def test_bad_input_is_refused_with_a_named_argument(call, match):
    with pytest.raises(PhysicsInputError, match=match):
        call()
