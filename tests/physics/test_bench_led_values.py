"""Bench readings of LEDs loading a free-running oscillator, reduced to capacitance ratios.

The readings and the expected ratios below are common practice, no published source: a
free-running oscillator read with nothing in its socket, then with a reverse-biased LED at
the most reverse bias a 9 V battery gave and at 0 V. With the fixture's own capacitance as
the unit, Thomson's formula gives C/C_fixture = (f0/f)² − 1, so the ratios need no inductance.
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.oscillator import (
    calibrate_oscillator,
    capacitance_from_frequency,
    relative_capacitance,
)

# Common practice, no published source (bench readings) [Hz].
F_OPEN = 29.6e6
RED_DIFFUSED = {"most_reverse": 28.246e6, "zero_bias": 26.865e6}
GREEN_BRIGHT = {"most_reverse": 24.5e6, "zero_bias": 23.49e6}

# Common practice, no published source: the figures these readings are quoted with.
RED_SWING = 2.18
GREEN_SWING = 1.28
GREEN_OVER_RED_AT_REVERSE = 4.7


def relative(readings):
    f = [readings["zero_bias"], readings["most_reverse"]]
    zero, reverse = relative_capacitance(f, F_OPEN)
    return zero, reverse


def test_diffused_red_swings_about_2_18_to_1():
    zero, reverse = relative(RED_DIFFUSED)
    assert_allclose(zero / reverse, RED_SWING, rtol=0.01)


def test_bright_green_swings_only_about_1_28_to_1():
    zero, reverse = relative(GREEN_BRIGHT)
    assert_allclose(zero / reverse, GREEN_SWING, rtol=0.01)


def test_green_adds_about_4_7_times_the_red_at_most_reverse_bias():
    _, red = relative(RED_DIFFUSED)
    _, green = relative(GREEN_BRIGHT)
    assert_allclose(green / red, GREEN_OVER_RED_AT_REVERSE, rtol=0.01)


@pytest.mark.parametrize("nominal_inductance_h", [0.47e-6, 1e-6, 2.2e-6])
def test_calibrated_route_gives_the_same_ratios_whatever_the_inductance(nominal_inductance_h):
    # Calibrate a fixture that reads F_OPEN open, with a nominal inductance and a 10 pF
    # reference whose reading follows from Thomson's formula. Absolute capacitances then
    # scale with 1/L, but every ratio must come out as from relative_capacitance.
    big_l = nominal_inductance_h
    c_fixture = 1.0 / ((2 * np.pi * F_OPEN) ** 2 * big_l)
    cref = 10e-12
    f_ref = 1.0 / (2 * np.pi * np.sqrt(big_l * (c_fixture + cref)))
    cal = calibrate_oscillator([0.0, cref], [F_OPEN, f_ref])
    assert_allclose(cal.inductance_h, big_l, rtol=1e-10)

    f = [
        RED_DIFFUSED["zero_bias"],
        RED_DIFFUSED["most_reverse"],
        GREEN_BRIGHT["zero_bias"],
        GREEN_BRIGHT["most_reverse"],
    ]
    c, _ = capacitance_from_frequency(f, cal)
    red_zero, red_rev, green_zero, green_rev = c
    assert_allclose(c / cal.stray_f, relative_capacitance(f, F_OPEN), rtol=1e-9)
    assert_allclose(red_zero / red_rev, RED_SWING, rtol=0.01)
    assert_allclose(green_zero / green_rev, GREEN_SWING, rtol=0.01)
    assert_allclose(green_rev / red_rev, GREEN_OVER_RED_AT_REVERSE, rtol=0.01)
