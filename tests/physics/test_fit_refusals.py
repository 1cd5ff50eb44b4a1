"""fit_junction refuses input no honest fit can use, and warns when a fit is doubtful."""

from __future__ import annotations

import numpy as np
import pytest

from labdb.physics import fitting
from labdb.physics.batch import fit_junction_batch
from labdb.physics.errors import PhysicsInputError
from labdb.physics.fitting import fit_junction
from labdb.physics.junction import junction_capacitance

V = np.linspace(0.0, 20.0, 41)
C = junction_capacitance(V, 100e-12, 0.7, 0.5)


def with_value(arr, i, value):
    out = np.array(arr, dtype=float)
    out[i] = value
    return out


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"bias_v": V[:-1]}, "bias_v has 40 values but capacitance_f has 41"),
        ({"bias_v": with_value(V, 3, np.nan)}, "bias_v holds nan at index 3"),
        ({"capacitance_f": with_value(C, 5, np.inf)}, "capacitance_f holds inf at index 5"),
        ({"capacitance_f": with_value(C, 2, 0.0)}, "capacitance_f must be positive; index 2"),
        ({"capacitance_f": with_value(C, 9, -1e-12)}, "index 9 holds -1e-12 F"),
        ({"bias_v": V[:3], "capacitance_f": C[:3]}, "3 points with weight > 0 cannot fit 3"),
        (
            {"bias_v": V[:4], "capacitance_f": C[:4], "model": "junction+cp"},
            "need at least 5",
        ),
        ({"bias_v": np.linspace(0, 0.4, 41)}, "bias span 0.4 V"),
        ({"weights": np.ones(40)}, "weights has shape (40,)"),
        ({"weights": with_value(np.ones(41), 4, -1.0)}, "weights must be finite and ≥ 0; index 4"),
        ({"weights": with_value(np.ones(41), 6, np.nan)}, "index 6 holds nan"),
        ({"weights": np.r_[np.ones(3), np.zeros(38)]}, "3 points with weight > 0"),
        ({"bias_v": np.c_[V, V]}, "bias_v must be one-dimensional"),
        ({"capacitance_f": ["1p"] * 41}, "capacitance_f is not a sequence of numbers"),
        ({"model": "diode"}, "model 'diode' is unknown"),
        ({"loss": "huber"}, "loss 'huber' is unknown"),
    ],
)
def test_bad_input_is_refused_with_a_message_naming_it(kwargs, message):
    args = {"bias_v": V, "capacitance_f": C} | kwargs
    with pytest.raises(PhysicsInputError) as err:
        fit_junction(**args)
    assert message in str(err.value)


def test_the_batch_fitter_names_the_bad_sweep():
    caps = np.array([C, C, with_value(C, 7, -2e-12)])
    with pytest.raises(
        PhysicsInputError, match=r"sweep 2: capacitance_f must be positive; index 7"
    ):
        fit_junction_batch(V, caps)
    with pytest.raises(PhysicsInputError, match=r"sweep 1: bias_v has 40 values"):
        fit_junction_batch([V, V[:-1]], [C, C])
    with pytest.raises(PhysicsInputError, match=r"sweep 0: bias span"):
        fit_junction_batch(np.linspace(0, 0.3, 41), C[None])
    with pytest.raises(PhysicsInputError, match=r"model 'x' is unknown"):
        fit_junction_batch(V, C[None], model="x")


def test_a_rising_sweep_is_fitted_with_a_warning():
    rng = np.random.default_rng(21)
    rising = 100e-12 * (1 + 0.01 * V) * (1 + 0.002 * rng.standard_normal(V.size))
    fit = fit_junction(V, rising, model="junction")
    assert any("does not fall with reverse bias" in w for w in fit.warnings)


def test_noise_on_a_falling_sweep_does_not_raise_the_rising_warning():
    # 3 % noise makes many neighbouring points rise; the rank correlation still sees a fall.
    rng = np.random.default_rng(22)
    v = np.linspace(0, 5, 41)
    noisy = junction_capacitance(v, 100e-12, 0.7, 0.5) * (1 + 0.03 * rng.standard_normal(v.size))
    assert (np.diff(noisy) > 0).sum() >= 5
    fit = fit_junction(v, noisy, model="junction")
    assert not any("does not fall" in w for w in fit.warnings)


def test_vj_and_m_too_correlated_to_separate_are_reported():
    v = np.linspace(0, 0.6, 41)  # a narrow span near 0 V cannot tell VJ from M
    fit = fit_junction(v, junction_capacitance(v, 100e-12, 0.7, 0.5), model="junction")
    assert abs(fit.correlation[1][2]) > 0.99
    assert any("VJ and M are too correlated" in w for w in fit.warnings)


def test_a_wide_sweep_gives_no_warnings():
    rng = np.random.default_rng(23)
    fit = fit_junction(V, C * (1 + 0.002 * rng.standard_normal(V.size)), model="junction")
    assert fit.warnings == []
    assert fit.converged


def test_a_parameter_on_its_bound_is_reported():
    # A junction whose C hardly moves: M is pushed to its lower bound.
    flat = 100e-12 * (1 - 1e-4 * V)
    fit = fit_junction(V, flat, model="junction")
    assert any("m sits at its lower bound 0.05" in w for w in fit.warnings)


def test_an_unconverged_fit_says_so(monkeypatch):
    real = fitting.least_squares

    def one_step(*args, **kwargs):
        kwargs["max_nfev"] = 1
        return real(*args, **kwargs)

    monkeypatch.setattr(fitting, "least_squares", one_step)
    rng = np.random.default_rng(24)
    fit = fit_junction(V, C * (1 + 0.002 * rng.standard_normal(V.size)), model="junction")
    assert not fit.converged
    assert any("did not converge" in w for w in fit.warnings)


def test_the_rank_check_matches_scipy_spearmanr():
    # Reference: scipy.stats.spearmanr (average ranks for ties). Rows: rising bias, falling
    # C with tied values; shuffled bias; a masked (padded) tail; a masked middle point.
    from scipy.stats import spearmanr

    from labdb.physics import _fitcore as core

    rng = np.random.default_rng(31)
    v = np.linspace(0, 10, 12)
    c = np.round(10 - v + rng.normal(0, 1.5, v.size))  # rounding makes ties
    shuffled = rng.permutation(v.size)
    bias = np.array([v, v[shuffled], v, v])
    cap = np.array([c, c[shuffled], c, c])
    mask = np.ones(bias.shape, dtype=bool)
    mask[2, 9:] = False
    mask[3, 4] = False
    got = core.spearman(bias, cap, mask)
    for i in range(4):
        want = spearmanr(bias[i][mask[i]], cap[i][mask[i]]).statistic
        np.testing.assert_allclose(got[i], want, rtol=1e-12)
    # The same rows one at a time (the fast path for rising bias) give the same answers.
    for i in range(4):
        np.testing.assert_allclose(
            core.spearman(bias[i : i + 1], cap[i : i + 1], mask[i : i + 1]),
            got[i : i + 1],
            rtol=1e-12,
        )
