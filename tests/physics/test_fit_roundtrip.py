"""fit_junction gives back the parameters a sweep was made from, with honest standard errors.

Truth is the SPICE depletion-capacitance formula (labdb.physics.junction, itself checked
against ngspice) evaluated at chosen parameters, with seeded multiplicative Gaussian noise.
Recovery within 3 standard errors is the usual z-test; the coverage test checks the reported
standard errors against the scatter of many fits (common practice, no single source).
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from labdb.physics import _fitcore as core
from labdb.physics.errors import PhysicsInputError
from labdb.physics.fitting import FITTER_VERSION, JunctionFit, fit_junction
from labdb.physics.junction import MODEL_PARAMS, junction_capacitance


def sweep(cjo, vj, m, cp=0.0, *, v_max=20.0, n=41, noise=0.0, seed=0, v_min=0.0):
    v = np.linspace(v_min, v_max, n)
    c = junction_capacitance(v, cjo, vj, m, cp)
    rng = np.random.default_rng(seed)
    return v, c * (1.0 + noise * rng.standard_normal(n))


# (cjo [F], vj [V], m, cp [F], highest reverse bias [V], relative noise, model)
CASES = [
    (100e-12, 0.7, 0.5, 0.0, 20.0, 0.003, "junction"),  # abrupt silicon varactor
    (300e-12, 0.8, 0.33, 0.0, 30.0, 0.002, "junction"),  # linearly graded
    (30e-12, 1.9, 0.45, 0.0, 15.0, 0.005, "junction"),  # LED-like, higher VJ
    (500e-12, 1.2, 1.5, 0.0, 10.0, 0.01, "junction"),  # hyperabrupt
    (200e-12, 1.5, 2.5, 0.0, 10.0, 0.002, "junction"),  # strongly hyperabrupt
    (100e-12, 0.7, 0.5, 8e-12, 20.0, 0.002, "junction+cp"),
    (60e-12, 1.0, 2.0, 2e-12, 8.0, 0.005, "junction+cp"),
    (400e-12, 0.9, 0.4, 40e-12, 25.0, 0.002, "junction+cp"),
]


@pytest.mark.parametrize(("cjo", "vj", "m", "cp", "v_max", "noise", "model"), CASES)
def test_it_recovers_known_parameters_within_three_standard_errors(
    cjo, vj, m, cp, v_max, noise, model
):
    v, c = sweep(
        cjo,
        vj,
        m,
        cp,
        v_max=v_max,
        noise=noise,
        seed=CASES.index((cjo, vj, m, cp, v_max, noise, model)),
    )
    fit = fit_junction(v, c, model=model)
    truth = {"cjo": cjo, "vj": vj, "m": m, "cp": cp}
    assert fit.converged, fit.message
    assert fit.model == model and tuple(fit.params) == MODEL_PARAMS[model]
    for name, value in fit.params.items():
        z = (value - truth[name]) / fit.stderr[name]
        assert abs(z) < 3.0, (name, value, truth[name], fit.stderr[name])
    # The residual scatter estimates the noise that was put in (ratio ~1 ± 0.2 for n = 41).
    assert 0.7 * noise < fit.rms_rel < 1.3 * noise


@pytest.mark.parametrize("model", ["junction", "junction+cp"])
def test_a_noise_free_sweep_gives_the_parameters_back_exactly(model):
    cp = 5e-12 if model == "junction+cp" else 0.0
    v, c = sweep(150e-12, 0.75, 0.47, cp, v_max=25.0)
    fit = fit_junction(v, c, model=model)
    expect = {"cjo": 150e-12, "vj": 0.75, "m": 0.47, "cp": cp}
    for name, value in fit.params.items():
        np.testing.assert_allclose(value, expect[name], rtol=1e-7, atol=1e-20)
    assert fit.rms_rel < 1e-9
    np.testing.assert_allclose(fit.r2, 1.0, rtol=0, atol=1e-12)
    # An exact fit has (near-)zero standard errors but a well-defined correlation matrix.
    assert np.isfinite(fit.correlation).all()
    assert fit.warnings == []


def test_forward_bias_points_follow_the_spice_extension():
    # −1 V reverse is beyond FC·VJ = 0.35 V forward: those points use SPICE's linear form.
    v, c = sweep(80e-12, 0.7, 0.5, v_min=-1.0, v_max=10.0)
    fit = fit_junction(v, c, model="junction")
    np.testing.assert_allclose(
        [fit.params[k] for k in ("cjo", "vj", "m")], [80e-12, 0.7, 0.5], rtol=1e-7
    )


@pytest.mark.parametrize("model", ["junction", "junction+cp"])
@pytest.mark.parametrize("v_min", [0.0, -1.0])
def test_the_analytic_jacobian_matches_central_differences(model, v_min):
    # Central differences, step 1e-6 relative: truncation error ~1e-12 (common practice).
    v = np.linspace(v_min, 12.0, 25)[None]
    x = np.array([[1.3, 0.8, 0.6, 0.1][: len(MODEL_PARAMS[model])]])
    cn = np.linspace(2.0, 0.5, 25)[None]
    sw = np.ones_like(cn)
    _, jt = core.model_jac(x, v, sw / cn, sw)
    for j in range(x.shape[1]):
        h = 1e-6 * x[0, j]
        up, dn = x.copy(), x.copy()
        up[0, j] += h
        dn[0, j] -= h
        num = (core.model_jac(up, v, sw / cn, sw)[0] - core.model_jac(dn, v, sw / cn, sw)[0]) / (
            2 * h
        )
        np.testing.assert_allclose(jt[0, j], num[0], rtol=1e-6, atol=1e-9)


@pytest.mark.parametrize(
    ("model", "truth", "noise", "v_max"),
    [
        ("junction", (120e-12, 0.8, 0.5, 0.0), 0.004, 20.0),
        ("junction+cp", (120e-12, 1.1, 1.2, 6e-12), 0.002, 12.0),
    ],
)
def test_reported_standard_errors_match_the_scatter_of_repeated_fits(model, truth, noise, v_max):
    # 200 seeded noisy copies. With correct errors the sample SD over the median reported
    # error is 1 ± 0.05 (1/√(2·199)); we allow 0.8–1.25. |z| < 2 should hold for ≈ 95 %
    # (Student t, 38 degrees of freedom: 94.7 %); with 200 draws ±3σ of the binomial is
    # about 0.90–0.99.
    names = MODEL_PARAMS[model]
    fits = [
        fit_junction(*sweep(*truth, v_max=v_max, noise=noise, seed=1000 + s), model=model)
        for s in range(200)
    ]
    assert all(f.converged for f in fits)
    p = np.array([[f.params[k] for k in names] for f in fits])
    se = np.array([[f.stderr[k] for k in names] for f in fits])
    z = (p - np.array(truth[: len(names)])) / se
    ratio = p.std(axis=0, ddof=1) / np.median(se, axis=0)
    assert np.all((ratio > 0.8) & (ratio < 1.25)), dict(zip(names, ratio, strict=True))
    inside = (np.abs(z) < 2).mean(axis=0)
    assert np.all((inside >= 0.90) & (inside <= 0.99)), dict(zip(names, inside, strict=True))


def test_auto_keeps_the_simple_model_without_package_capacitance():
    v, c = sweep(100e-12, 0.7, 0.5, noise=0.003, seed=3)
    fit = fit_junction(v, c)
    assert fit.model == "junction"
    assert "AICc" in fit.message


def test_auto_picks_the_package_capacitance_when_it_is_there():
    v, c = sweep(100e-12, 0.7, 0.5, 10e-12, noise=0.002, seed=3)
    fit = fit_junction(v, c)
    assert fit.model == "junction+cp"
    assert abs(fit.params["cp"] - 10e-12) < 3 * fit.stderr["cp"]


def test_figures_of_merit_follow_their_definitions():
    v, c = sweep(220e-12, 0.9, 0.42, noise=0.004, seed=5)
    fit = fit_junction(v, c, model="junction")
    rel = fit.evaluate(v) / c - 1.0
    n, k = v.size, 3
    np.testing.assert_allclose(fit.rms_rel, np.sqrt(np.mean(rel**2)), rtol=1e-9)
    # R² on capacitance: 1 − SS_res/SS_tot (any statistics text).
    r2 = 1 - np.sum((fit.evaluate(v) - c) ** 2) / np.sum((c - c.mean()) ** 2)
    np.testing.assert_allclose(fit.r2, r2, rtol=1e-12)
    # AICc as documented: n·ln(SSR/n) + 2k + 2k(k+1)/(n−k−1) (Burnham & Anderson, 2002,
    # with the noise variance not counted in k).
    ssr = np.sum(rel**2)
    np.testing.assert_allclose(
        fit.aicc, n * np.log(ssr / n) + 2 * k + 2 * k * (k + 1) / (n - k - 1), rtol=1e-9
    )
    assert (fit.n_points, fit.bias_min_v, fit.bias_max_v) == (41, 0.0, 20.0)
    corr = np.array(fit.correlation)
    np.testing.assert_allclose(np.diag(corr), 1.0, rtol=1e-12)
    np.testing.assert_allclose(corr, corr.T, rtol=1e-12)


def test_a_zero_weight_drops_a_point():
    v, c = sweep(90e-12, 0.6, 0.5, noise=0.003, seed=8)
    c[7] *= 1.5  # a bad reading
    w = np.ones_like(c)
    w[7] = 0.0
    weighted = fit_junction(v, c, model="junction", weights=w)
    dropped = fit_junction(np.delete(v, 7), np.delete(c, 7), model="junction")
    for k in ("cjo", "vj", "m"):
        np.testing.assert_allclose(weighted.params[k], dropped.params[k], rtol=1e-7)
        np.testing.assert_allclose(weighted.stderr[k], dropped.stderr[k], rtol=1e-6)
    assert weighted.n_points == 40


def test_the_robust_loss_resists_an_outlier():
    v, c = sweep(90e-12, 0.6, 0.5, noise=0.002, seed=9)
    c[12] *= 1.3
    plain = fit_junction(v, c, model="junction")
    robust = fit_junction(v, c, model="junction", loss="soft_l1")
    assert robust.loss == "soft_l1" and "soft_l1" in robust.message
    for k, truth in (("vj", 0.6), ("m", 0.5)):
        assert abs(robust.params[k] - truth) < abs(plain.params[k] - truth)
        assert abs(robust.params[k] - truth) < 3 * robust.stderr[k]


def test_to_dict_is_json_and_round_trips():
    v, c = sweep(100e-12, 0.7, 0.5, 5e-12, noise=0.002, seed=4)
    fit = fit_junction(v, c, model="junction+cp")
    text = json.dumps(fit.to_dict(), allow_nan=False)
    back = JunctionFit.from_dict(json.loads(text))
    assert back == fit
    assert back.fitter_version == FITTER_VERSION
    np.testing.assert_allclose(back.evaluate(v), fit.evaluate(v), rtol=0)
    broken = fit.to_dict()
    del broken["params"]
    with pytest.raises(PhysicsInputError, match=r"missing \['params'\]"):
        JunctionFit.from_dict(broken)


def test_an_undefined_aicc_is_stored_as_none():
    # Five points and four parameters: n − k − 1 = 0, so AICc is infinite.
    v, c = sweep(100e-12, 0.7, 0.5, 5e-12, n=5, noise=0.002, seed=4)
    fit = fit_junction(v, c, model="junction+cp")
    assert fit.aicc == np.inf
    d = fit.to_dict()
    assert d["aicc"] is None
    json.dumps(d, allow_nan=False)
    assert JunctionFit.from_dict(d).aicc == np.inf
