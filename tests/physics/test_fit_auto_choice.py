"""model="auto" keeps the package capacitance only when the data resolve it."""

import numpy as np
import pytest

from labdb.physics import fit_junction, junction_capacitance


def _sweep(v, cjo, vj, m, cp, noise, seed):
    c = junction_capacitance(v, cjo, vj, m, cp)
    return c * (1 + noise * np.random.default_rng(seed).standard_normal(v.size))


# Seeds 26 and 138 are draws where AICc alone prefers a degenerate junction+cp curve.
@pytest.mark.parametrize("seed", [0, 1, 2, 26, 138])
def test_a_short_led_sweep_without_package_capacitance_stays_three_parameter(seed):
    # LED-like junction over 0–5 V (invented values, typical of a green LED: common
    # practice, no source); with no CP in the data, a four-parameter fit is degenerate.
    v = np.linspace(0, 5, 41)
    fit = fit_junction(v, _sweep(v, 88e-12, 2.7, 0.30, 0.0, 0.0025, seed), model="auto")
    assert fit.model == "junction"
    assert 2.0 < fit.params["vj"] < 4.0


def test_a_large_package_capacitance_is_kept(seed=3):
    # A varactor-like junction with CP = 20 % of CJO over a long sweep: clearly resolved.
    v = np.linspace(0, 25, 51)
    fit = fit_junction(v, _sweep(v, 50e-12, 0.7, 0.55, 10e-12, 0.002, seed), model="auto")
    assert fit.model == "junction+cp"
    assert fit.params["cp"] == pytest.approx(10e-12, rel=5 * fit.stderr["cp"] / 10e-12)
