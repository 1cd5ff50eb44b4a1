"""The series R–L–C fit: exact recovery, honest standard errors, bounds, refusals, figures."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.errors import PhysicsInputError
from labdb.physics.impedance import (
    SeriesRLCFit,
    effective_capacitance,
    esr_at,
    fit_series_rlc,
    quality_factor,
    series_rlc_impedance,
)

F = np.geomspace(1e5, 1e9, 201)


def _z(rs, ls, cs, f=F):
    # Z = Rs + j(ωL − 1/(ωC)), written out independently of labdb.
    w = 2 * np.pi * f
    return rs + 1j * (w * ls - 1 / (w * cs))


@pytest.mark.parametrize(
    "rs, ls, cs",
    [(0.5, 1.5e-9, 50e-12), (2.0, 0.4e-9, 8e-12), (0.05, 5e-9, 470e-12), (12.0, 2e-9, 1.2e-12)],
)
def test_noise_free_data_gives_back_the_generating_values(rs, ls, cs):
    fit = fit_series_rlc(F, _z(rs, ls, cs))
    assert_allclose([fit.rs_ohm, fit.ls_h, fit.cs_f], [rs, ls, cs], rtol=1e-9)
    assert fit.converged and fit.warnings == [] and fit.rms_rel < 1e-12
    assert fit.n_points == 201 and (fit.frequency_min_hz, fit.frequency_max_hz) == (1e5, 1e9)


def test_standard_errors_cover_the_truth_as_often_as_they_should():
    # 200 seeded noisy sweeps (0.3 % complex Gaussian noise): each parameter's error in
    # units of its standard error should be ~N(0, 1); check its spread and 3σ coverage.
    rng = np.random.default_rng(20260301)
    truth = np.array([0.5, 1.5e-9, 50e-12])
    z0 = _z(*truth)
    zs = []
    for _ in range(200):
        noise = 0.003 * (rng.standard_normal(F.size) + 1j * rng.standard_normal(F.size))
        fit = fit_series_rlc(F, z0 * (1 + noise))
        est = np.array([fit.rs_ohm, fit.ls_h, fit.cs_f])
        se = np.array([fit.stderr[k] for k in ("rs_ohm", "ls_h", "cs_f")])
        zs.append((est - truth) / se)
    zs = np.array(zs)
    assert np.all(np.abs(zs.std(axis=0) - 1) < 0.2), zs.std(axis=0)
    assert np.mean(np.abs(zs) < 3) > 0.98


def test_weights_of_zero_drop_points():
    z = _z(0.5, 1.5e-9, 50e-12)
    z[10] *= 5.0  # a wild reading
    w = np.ones(F.size)
    w[10] = 0
    fit = fit_series_rlc(F, z, weights=w)
    assert_allclose([fit.rs_ohm, fit.ls_h, fit.cs_f], [0.5, 1.5e-9, 50e-12], rtol=1e-9)
    assert fit.n_points == 200


def test_a_sweep_far_below_resonance_pins_ls_to_zero_and_says_so():
    f = np.geomspace(1e3, 1e5, 50)  # SRF of 1.5 nH and 50 pF is ~581 MHz
    z = 0.5 - 1j / (2 * np.pi * f * 50e-12)
    z = z * (1 - 0.001j)  # a little extra capacitive reactance: best Ls would be negative
    fit = fit_series_rlc(f, z)
    assert fit.ls_h == 0.0 and math.isinf(fit.srf_hz)
    assert any("Ls sits on its bound" in w for w in fit.warnings)


def test_a_poor_description_is_flagged():
    # a junction leaking through 30 kΩ in parallel is not a series R–L–C: the misfit shows
    w = 2 * np.pi * F
    z = 0.5 + 1j * w * 1.5e-9 + 1 / (1 / 30e3 + 1j * w * 50e-12)
    fit = fit_series_rlc(F, z)
    assert fit.rms_rel > 0.05 and any("misses the data" in w for w in fit.warnings)


def test_an_inductor_is_refused():
    with pytest.raises(PhysicsInputError, match="no series capacitance"):
        fit_series_rlc(F, 0.5 + 1j * 2 * np.pi * F * 10e-9)


@pytest.mark.parametrize(
    "f, z, words",
    [
        (F[:2], _z(0.5, 1e-9, 5e-11, F[:2]), "at least 3"),
        (np.array([1e6, 1e6, 2e6]), np.array([1 - 1j, 1 - 1j, 1 - 1j]), "repeats"),
        (np.array([1e6, -2e6, 3e6]), np.ones(3) * (1 - 1j), "positive"),
        (F, _z(0.5, 1e-9, 5e-11)[:-1], "200 values"),
        (np.array([1e6, 2e6, 3e6]), np.array([1, np.nan, 1j]), "finite"),
        (np.array([1e6, 2e6, 3e6]), np.array([0, 1 - 1j, 1 - 1j]), "0 Ω"),
    ],
)
def test_bad_input_is_refused_naming_the_problem(f, z, words):
    with pytest.raises(PhysicsInputError, match=words):
        fit_series_rlc(f, z)


def test_figures_of_the_fit_follow_their_formulas():
    fit = fit_series_rlc(F, _z(0.5, 1.5e-9, 50e-12))
    f = np.array([1e6, 100e6])
    w = 2 * np.pi * f
    x = w * 1.5e-9 - 1 / (w * 50e-12)
    assert_allclose(fit.q_at(f), np.abs(x) / 0.5, rtol=1e-8)
    assert_allclose(fit.ceff_at(f), 50e-12 / (1 - w**2 * 1.5e-9 * 50e-12), rtol=1e-8)
    assert math.isnan(fit.ceff_at([2e9])[0])  # above SRF the part is inductive
    assert fit.srf_hz == pytest.approx(1 / (2 * math.pi * math.sqrt(1.5e-9 * 50e-12)), rel=1e-9)


def test_measured_figures_q_ceff_and_esr():
    z = np.array([2 - 200j, 1 + 0j, 0 - 5j, -1 + 3j, 4 + 8j])
    assert_allclose(quality_factor(z)[[0, 1, 4]], [100, 0, 2], rtol=1e-15)
    assert math.isinf(quality_factor(z)[2]) and math.isnan(quality_factor(z)[3])
    f = np.array([1e6, 2e6, 3e6, 4e6, 5e6])
    c = effective_capacitance(f, z)
    assert c[0] == pytest.approx(1 / (2 * math.pi * 1e6 * 200), rel=1e-15)
    assert np.isnan(c[[1, 3, 4]]).all()
    # ESR linear in log f: halfway (geometric mean) between 1 and 4 MHz at 2 MHz
    assert esr_at([1e6, 4e6], [1 - 9j, 3 - 2j], 2e6) == pytest.approx(2.0, rel=1e-12)
    with pytest.raises(PhysicsInputError, match="outside"):
        esr_at([1e6, 4e6], [1 - 9j, 3 - 2j], 5e6)


def test_a_fit_survives_a_round_trip_through_its_dict():
    fit = fit_series_rlc(F, _z(0.5, 1.5e-9, 50e-12) * (1 + 1e-3j))
    back = SeriesRLCFit.from_dict(fit.to_dict())
    assert back == fit
    assert_allclose(back.impedance(F), series_rlc_impedance(F, fit.rs_ohm, fit.ls_h, fit.cs_f))
