"""Series resonance against the textbook formulas and a worked value, and S11 ↔ Z by hand.

Series R–L–C resonance: f0 = 1/(2π√(LC)) and, at resonance, Q = ω0·L/R = (1/R)·√(L/C) — the
standard results of any circuits text (e.g. Hayt, Kemmerly & Durbin, *Engineering Circuit
Analysis*, the chapter on frequency response; from memory). Worked example, hand-computed:
L = 10 µH, C = 100 pF → √(LC) = √(1e-15) = 3.16228e-8 s, f0 = 1/(2π·3.16228e-8) = 5.0329 MHz;
√(L/C) = √(1e5) = 316.228 Ω, so with R = 10 Ω, Q = 31.6228.

Reflection coefficient: S11 = (Z − Z0)/(Z + Z0), Z = Z0(1 + S11)/(1 − S11) (Pozar, *Microwave
Engineering*, ch. 2; from memory). scikit-rf is not a dependency of labdb, so the round trip
is checked against hand-worked values instead.
"""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.impedance import (
    fit_series_rlc,
    s11_to_z,
    self_resonant_frequency,
    series_rlc_impedance,
    z_to_s11,
)

L, C, R = 10e-6, 100e-12, 10.0


def test_the_worked_resonance_frequency():
    assert self_resonant_frequency(L, C) == pytest.approx(5.0329e6, rel=1e-5)


def test_the_worked_q_at_resonance_from_the_fitted_equivalent():
    f = np.geomspace(100e3, 100e6, 301)
    fit = fit_series_rlc(f, series_rlc_impedance(f, R, L, C))
    assert fit.srf_hz == pytest.approx(5.0329e6, rel=1e-5)
    # Q at resonance is ω0L/R = √(L/C)/R; the model's |X|/R is 0 exactly at f0, so take Q
    # as the reactance of either element there, divided by R
    q0 = 2 * math.pi * fit.srf_hz * fit.ls_h / fit.rs_ohm
    assert q0 == pytest.approx(31.6228, rel=1e-5)
    assert 1 / (2 * math.pi * fit.srf_hz * fit.cs_f * fit.rs_ohm) == pytest.approx(
        31.6228, rel=1e-5
    )


def test_q_far_below_resonance_is_that_of_the_capacitor_alone():
    # at f ≪ f0, |X| ≈ 1/(ωC): at 100 kHz, 1/(2π·1e5·1e-10) = 15915.5 Ω, minus ωL = 6.283 Ω
    f = np.geomspace(1e5, 1e8, 50)
    fit = fit_series_rlc(f, series_rlc_impedance(f, R, L, C))
    assert fit.q_at([1e5])[0] == pytest.approx((15915.494 - 6.2832) / 10.0, rel=1e-6)


# (S11, Z) pairs worked by hand with Z0 = 50 Ω
HAND = [
    (0.0, 50.0),  # matched load
    (-1.0, 0.0),  # short
    (1 / 3, 100.0),  # 50·(4/3)/(2/3)
    (-1 / 3, 25.0),  # 50·(2/3)/(4/3)
    (1j, 50j),  # 50·(1+j)/(1−j) = 50·(1+j)²/2 = 50j
    (-1j, -50j),
]


@pytest.mark.parametrize("s11, z", HAND)
def test_s11_and_z_agree_with_hand_worked_pairs(s11, z):
    assert_allclose(s11_to_z(s11, 50.0), z, atol=1e-12)
    if z != 0:
        assert_allclose(z_to_s11(z, 50.0), s11, atol=1e-15)


def test_a_general_point_by_hand():
    # (1.2 + 0.4j)/(0.8 − 0.4j) = (1.2 + 0.4j)(0.8 + 0.4j)/0.8 = (0.96 − 0.16 + 0.8j)/0.8 = 1 + 1j
    assert_allclose(s11_to_z(0.2 + 0.4j, 50.0), 50 + 50j, rtol=1e-15)
    assert_allclose(z_to_s11(50 + 50j, 50.0), 0.2 + 0.4j, rtol=1e-15)


def test_the_round_trip_holds_over_the_passive_disc():
    rng = np.random.default_rng(7)
    r = np.sqrt(rng.uniform(0, 0.999, 500))
    s = r * np.exp(2j * np.pi * rng.uniform(size=500))
    assert_allclose(z_to_s11(s11_to_z(s, 75.0), 75.0), s, atol=1e-12)
    assert np.all(s11_to_z(s, 75.0).real >= 0)  # |S11| < 1 means a passive load, R ≥ 0
