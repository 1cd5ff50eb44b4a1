"""fit_junction_batch gives, sweep for sweep, what fit_junction gives.

The single fitter uses scipy's trust-region solver; the batch uses the vectorised
Levenberg–Marquardt of labdb.physics.lm. Agreement to 1e-6 (relative) is the contract;
CP near its zero bound is compared absolutely (1e-8 of the median capacitance), because a
relative difference of two numbers that are both ~0 means nothing.
"""

from __future__ import annotations

import numpy as np
import pytest

from labdb.physics.batch import fit_junction_batch
from labdb.physics.fitting import fit_junction
from labdb.physics.junction import junction_capacitance
from labdb.physics.lm import lm_solve


def assert_same_fit(single, batch, c):
    assert batch.model == single.model
    assert batch.converged == single.converged
    assert (batch.n_points, batch.bias_min_v, batch.bias_max_v) == (
        single.n_points,
        single.bias_min_v,
        single.bias_max_v,
    )
    atol = {"cp": 1e-8 * np.median(c)}
    for k, value in single.params.items():
        np.testing.assert_allclose(batch.params[k], value, rtol=1e-6, atol=atol.get(k, 0.0))
        np.testing.assert_allclose(
            batch.stderr[k], single.stderr[k], rtol=1e-5, atol=1e-6 * single.stderr[k]
        )
    np.testing.assert_allclose(batch.rms_rel, single.rms_rel, rtol=1e-8)
    np.testing.assert_allclose(batch.aicc, single.aicc, rtol=1e-8)
    assert [w.split(" (")[0] for w in batch.warnings] == [w.split(" (")[0] for w in single.warnings]


def ragged_sweeps(seed=0):
    """Sweeps of different lengths, ranges and kinds (with CP, hyperabrupt, forward bias)."""
    rng = np.random.default_rng(seed)
    specs = [
        (100e-12, 0.7, 0.5, 0.0, 0.0, 20.0, 41),
        (300e-12, 0.8, 0.33, 0.0, 0.0, 30.0, 61),
        (50e-12, 1.2, 1.8, 3e-12, 0.0, 8.0, 25),
        (100e-12, 0.7, 0.5, 8e-12, 0.0, 20.0, 33),
        (80e-12, 0.6, 0.5, 0.0, -1.0, 10.0, 41),  # reaches past FC·VJ forward bias
        (30e-12, 2.0, 0.45, 0.0, 0.0, 15.0, 12),
        (200e-12, 1.5, 2.5, 0.0, 0.0, 10.0, 41),
        (120e-12, 0.9, 0.5, 0.0, 0.0, 0.8, 21),  # narrow: VJ–M correlation warning
    ]
    biases, caps = [], []
    for cjo, vj, m, cp, lo, hi, n in specs:
        v = np.linspace(lo, hi, n)
        c = junction_capacitance(v, cjo, vj, m, cp) * (1 + 0.003 * rng.standard_normal(n))
        biases.append(v)
        caps.append(c)
    # A rising sweep: fitted, with its warnings.
    v = np.linspace(0, 10, 30)
    biases.append(v)
    caps.append(100e-12 * (1 + 0.02 * v) * (1 + 0.002 * rng.standard_normal(v.size)))
    return biases, caps


@pytest.mark.parametrize("model", ["junction", "junction+cp", "auto"])
def test_batch_equals_single_on_ragged_sweeps(model):
    biases, caps = ragged_sweeps()
    batch = fit_junction_batch(biases, caps, model=model)
    assert len(batch) == len(caps)
    for v, c, b in zip(biases, caps, batch, strict=True):
        assert_same_fit(fit_junction(v, c, model=model), b, c)


def test_auto_chooses_per_sweep_as_the_single_fit_does():
    biases, caps = ragged_sweeps()
    models = [f.model for f in fit_junction_batch(biases, caps, model="auto")]
    assert models == [fit_junction(v, c).model for v, c in zip(biases, caps, strict=True)]
    assert set(models) == {"junction", "junction+cp"}  # the set really is mixed


def test_a_2d_array_with_shared_bias_equals_single_fits():
    rng = np.random.default_rng(5)
    v = np.linspace(0, 25, 41)
    cjo = rng.uniform(30e-12, 500e-12, 40)
    vj = rng.uniform(0.4, 2.5, 40)
    m = rng.uniform(0.3, 2.5, 40)
    c = np.array([junction_capacitance(v, *p) for p in zip(cjo, vj, m, strict=True)])
    c *= 1 + 0.005 * rng.standard_normal(c.shape)
    batch = fit_junction_batch(v, c)
    for ci, b in zip(c, batch, strict=True):
        assert_same_fit(fit_junction(v, ci, model="junction"), b, ci)


def test_an_empty_batch_gives_no_fits():
    assert fit_junction_batch(np.zeros((0, 41)), np.zeros((0, 41))) == []


def test_the_lm_core_respects_bounds_and_solves_each_problem_on_its_own():
    # Problem 0: y = a·x with a fitted freely (least squares: a = Σxy/Σx², closed form).
    # Problem 1: the same data with the bound a ≤ 1, so the answer is the bound.
    x = np.array([1.0, 2.0, 3.0])
    y = np.array([2.1, 3.9, 6.2])

    def fun(a, idx):
        r = a[:, :1] * x - y
        return r, np.broadcast_to(x, (a.shape[0], 1, 3)).copy()

    res = lm_solve(fun, np.array([[0.5], [0.5]]), upper=np.array([[np.inf], [1.0]]))
    # Damped steps approach even a linear problem geometrically; ftol stops it near 1e-11.
    np.testing.assert_allclose(res.x[:, 0], [np.dot(x, y) / np.dot(x, x), 1.0], rtol=1e-9)
    assert res.converged.all()
