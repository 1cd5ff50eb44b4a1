"""A bias series of impedance sweeps → C–V and Q–V at one frequency (pure physics).

Truth: a junction Cs(V) = CJO·(1 + V/VJ)^(−M) + CP (SPICE depletion form) in series with
0.5 Ω and 1.5 nH (invented values). At frequency f the series circuit's effective
capacitance is Cs/(1 − ω²LsCs) and its Q is |ωLs − 1/(ωCs)|/Rs (closed forms, written out here).
"""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.bias_series import ImpedanceSweep, bias_series_to_cv, tidy_down
from labdb.physics.errors import PhysicsInputError
from labdb.physics.fitting import fit_junction

CJO, VJ, M, CP = 51e-12, 0.72, 0.54, 0.6e-12
RS, LS = 0.5, 1.5e-9
BIAS = np.array([0.0, 1.0, 2.0, 4.0, 8.0, 12.0, 20.0])
F = np.geomspace(1e5, 1e9, 201)


def _cs(v):
    return CJO * (1 + np.asarray(v) / VJ) ** (-M) + CP


def _sweeps(bias=BIAS, f=F):
    out = []
    for v in bias:
        w = 2 * np.pi * f
        out.append(ImpedanceSweep(float(v), f, RS + 1j * (w * LS - 1 / (w * _cs(v)))))
    return out


def test_the_default_frequency_is_the_lowest_srf_over_ten_rounded_down():
    cv = bias_series_to_cv(_sweeps()[::-1])  # order of the input does not matter
    srf0 = 1 / (2 * math.pi * math.sqrt(LS * _cs(0.0)))  # lowest SRF: the largest C, at 0 V
    assert 0.05 < srf0 / 10 / 1e9 < 0.1  # ~57 MHz, so the 1-2-5 value below is 50 MHz
    assert cv.frequency_hz == pytest.approx(50e6, rel=1e-12)
    assert_allclose(cv.bias_v, BIAS)
    w = 2 * math.pi * 50e6
    assert_allclose(cv.capacitance_f, _cs(BIAS) / (1 - w**2 * LS * _cs(BIAS)), rtol=1e-8)
    assert_allclose(cv.q, np.abs(w * LS - 1 / (w * _cs(BIAS))) / RS, rtol=1e-7)
    assert_allclose(cv.srf_hz, 1 / (2 * np.pi * np.sqrt(LS * _cs(BIAS))), rtol=1e-8)
    assert any("divided by 10" in n for n in cv.notes)


def test_at_a_low_frequency_the_c_v_fits_back_to_the_junction():
    cv = bias_series_to_cv(_sweeps(), frequency_hz=1e6)
    # at 1 MHz Ceff/Cs − 1 = ω²LsCs/(1 − ω²LsCs) ≈ 3e-6: the junction model fits back
    fit = fit_junction(cv.bias_v, cv.capacitance_f, model="junction+cp")
    assert fit.params["cjo"] == pytest.approx(CJO, rel=1e-4)
    assert fit.params["vj"] == pytest.approx(VJ, rel=1e-3)
    assert fit.params["m"] == pytest.approx(M, rel=1e-3)


def test_a_frequency_near_resonance_is_used_with_a_caution():
    cv = bias_series_to_cv(_sweeps(), frequency_hz=300e6)
    assert any("within a decade of self-resonance" in n for n in cv.notes)


@pytest.mark.parametrize(
    "value, want", [(57.3e6, 50e6), (19e6, 10e6), (2e6, 2e6), (0.99, 0.5), (4.99e-3, 2e-3)]
)
def test_tidy_down_gives_the_1_2_5_value_below(value, want):
    assert tidy_down(value) == pytest.approx(want, rel=1e-12)


def test_the_highest_common_frequency_is_used_when_srf_over_ten_lies_beyond_the_sweeps():
    cv = bias_series_to_cv(_sweeps(f=np.geomspace(1e5, 20e6, 101)))
    assert cv.frequency_hz == pytest.approx(20e6)
    assert any("highest common frequency" in n for n in cv.notes)


@pytest.mark.parametrize(
    "sweeps, kwargs, words",
    [
        (_sweeps(BIAS[:2]), {}, "at least 3"),
        (_sweeps([0.0, 1.0, 1.0, 2.0]), {}, "two sweeps at 1 V"),
        (_sweeps(), {"frequency_hz": 2e9}, "outside the range"),
        (_sweeps(), {"frequency_hz": 800e6}, "at or above its self-resonance"),
        (
            [
                *_sweeps(BIAS[:2], np.geomspace(1e5, 1e6, 20)),
                *_sweeps(BIAS[2:4], np.geomspace(2e6, 1e9, 20)),
            ],
            {},
            "share no frequency range",
        ),
    ],
)
def test_a_series_that_cannot_give_a_c_v_is_refused(sweeps, kwargs, words):
    with pytest.raises(PhysicsInputError, match=words):
        bias_series_to_cv(sweeps, **kwargs)
