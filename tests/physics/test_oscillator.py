"""Oscillator-fixture calibration and frequency-to-capacitance conversion."""

import json
import math
from dataclasses import replace

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.errors import PhysicsInputError
from labdb.physics.oscillator import (
    OscillatorCalibration,
    calibrate_oscillator,
    capacitance_from_frequency,
    relative_capacitance,
)

L_TRUE = 4.7e-6  # [H]
STRAY_TRUE = 38e-12  # [F]


def thomson(inductance_h, capacitance_f):
    """Thomson's formula f = 1/(2π√(LC)), written out independently of the module."""
    return 1.0 / (2.0 * np.pi * np.sqrt(inductance_h * np.asarray(capacitance_f)))


def readings(refs, inductance=L_TRUE, stray=STRAY_TRUE, coupling=None):
    refs = np.asarray(refs, dtype=float)
    seen = refs if coupling is None else refs * coupling / (refs + coupling)
    return thomson(inductance, stray + seen)


def test_thomson_formula_matches_hand_computation():
    # Hand-computed (Thomson's formula): 10 µH with 100 pF → 1/(2π·√1e-15 s²) = 5.0329 MHz.
    cal = OscillatorCalibration(10e-6, 100e-12, [[0.0, 0.0], [0.0, 0.0]], [], [], [], None)
    assert_allclose(cal.open_frequency_hz, 5.0329e6, rtol=2e-5)


def test_it_recovers_inductance_and_stray_from_exact_references():
    refs = [0.0, 10e-12, 22e-12, 47e-12, 100e-12]
    cal = calibrate_oscillator(refs, readings(refs))
    assert_allclose(cal.inductance_h, L_TRUE, rtol=1e-11)
    assert_allclose(cal.stray_f, STRAY_TRUE, rtol=1e-11)
    assert_allclose(cal.residuals_hz, 0.0, atol=1e-4)
    assert_allclose(cal.open_frequency_hz, thomson(L_TRUE, STRAY_TRUE), rtol=1e-11)
    c, _ = capacitance_from_frequency(readings([33e-12, 68e-12]), cal)
    assert_allclose(c, [33e-12, 68e-12], rtol=1e-9)


def test_two_readings_equal_the_one_reference_closed_form():
    # REFERENCES.md, oscillator fixtures (common practice): with f1 open and f2 with Cref,
    # C_stray = Cref·f2²/(f1² − f2²), L = (1/f2² − 1/f1²)/(4π²·Cref).
    cref = 47e-12
    f1, f2 = 12.345e6, 9.876e6  # arbitrary readings, not from the model
    cal = calibrate_oscillator([0.0, cref], [f1, f2])
    assert_allclose(cal.stray_f, cref * f2**2 / (f1**2 - f2**2), rtol=1e-12)
    assert_allclose(cal.inductance_h, (1 / f2**2 - 1 / f1**2) / (4 * np.pi**2 * cref), rtol=1e-12)


def test_two_readings_leave_the_covariance_unknown_not_zero():
    cal = calibrate_oscillator([0.0, 47e-12], readings([0.0, 47e-12]))
    assert not cal.covariance_known
    assert math.isinf(cal.covariance[0][0]) and math.isinf(cal.covariance[1][1])
    _, sigma = capacitance_from_frequency(readings([20e-12]), cal)
    assert np.isinf(sigma[0])
    data = json.loads(json.dumps(cal.to_dict(), allow_nan=False))
    assert data["covariance"] is None
    assert OscillatorCalibration.from_dict(data) == cal


def test_to_dict_round_trips_through_strict_json():
    rng = np.random.default_rng(3)
    refs = [0.0, 10e-12, 47e-12, 100e-12]
    freq = readings(refs) + rng.normal(0.0, 50.0, 4)
    cal = calibrate_oscillator(refs, freq, coupling_f=1e-9)
    back = OscillatorCalibration.from_dict(json.loads(json.dumps(cal.to_dict(), allow_nan=False)))
    assert back == cal
    assert back.covariance_known


def test_coupling_capacitor_is_removed():
    cc = 150e-12
    refs = [0.0, 10e-12, 33e-12, 100e-12]
    cal = calibrate_oscillator(refs, readings(refs, coupling=cc), coupling_f=cc)
    assert_allclose([cal.inductance_h, cal.stray_f], [L_TRUE, STRAY_TRUE], rtol=1e-10)
    parts = np.array([5e-12, 47e-12, 220e-12])
    c, _ = capacitance_from_frequency(readings(parts, coupling=cc), cal)
    assert_allclose(c, parts, rtol=1e-9)
    # Ignoring the coupling capacitor would under-read: the check can fail.
    naive = calibrate_oscillator(refs, readings(refs, coupling=cc))
    c_naive, _ = capacitance_from_frequency(readings(parts, coupling=cc), naive)
    assert np.all(np.abs(c_naive / parts - 1) > 0.02)


def test_reported_covariance_matches_monte_carlo_scatter():
    # Seeded Monte Carlo: noisy frequencies, many calibrations. The spread of the estimates
    # must match the covariance each calibration reports (scatter-based, n = 6 readings).
    rng = np.random.default_rng(20240611)
    refs = np.array([0.0, 10e-12, 22e-12, 47e-12, 68e-12, 100e-12])
    f_true = readings(refs)
    sigma_f = 2e3  # [Hz]
    est, sd, hits = [], [], 0
    f_unit = readings([30e-12])
    for _ in range(400):
        cal = calibrate_oscillator(refs, f_true + rng.normal(0.0, sigma_f, refs.size))
        est.append([cal.inductance_h, cal.stray_f])
        sd.append(np.sqrt(np.diag(cal.covariance)))
        c, s = capacitance_from_frequency(f_unit, cal)
        hits += abs(c[0] - 30e-12) <= s[0]
    est, sd = np.array(est), np.array(sd)
    assert_allclose(est.mean(axis=0), [L_TRUE, STRAY_TRUE], rtol=2e-3)
    assert_allclose(est.std(axis=0), np.sqrt(np.mean(sd**2, axis=0)), rtol=0.15)
    # Student t with 4 dof: P(|t| ≤ 1) = 0.6376; allow ±0.07 for 400 draws.
    assert 0.57 <= hits / 400 <= 0.71


def test_stated_frequency_uncertainty_gives_absolute_covariance():
    rng = np.random.default_rng(7)
    refs = np.array([0.0, 22e-12, 47e-12, 100e-12])
    f_true = readings(refs)
    sigma_f = 1.5e3
    est = []
    for _ in range(400):
        cal = calibrate_oscillator(
            refs, f_true + rng.normal(0.0, sigma_f, 4), freq_sigma_hz=sigma_f
        )
        est.append([cal.inductance_h, cal.stray_f])
    # Absolute covariance barely depends on the draw; compare it with the Monte Carlo one.
    mc_cov = np.cov(np.array(est).T)
    assert_allclose(np.sqrt(np.diag(cal.covariance)), np.sqrt(np.diag(mc_cov)), rtol=0.12)
    corr = cal.covariance[0][1] / math.sqrt(cal.covariance[0][0] * cal.covariance[1][1])
    assert_allclose(corr, mc_cov[0, 1] / math.sqrt(mc_cov[0, 0] * mc_cov[1, 1]), atol=0.08)


def test_frequency_uncertainty_adds_to_sigma():
    refs = [0.0, 22e-12, 47e-12, 100e-12]
    cal = calibrate_oscillator(refs, readings(refs), freq_sigma_hz=100.0)
    f = readings([30e-12])
    _, s0 = capacitance_from_frequency(f, cal)
    _, s1 = capacitance_from_frequency(f, cal, freq_sigma_hz=1e3)
    # dC/df = −2/((2π)²·L·f³): first-order term of the reading alone, added in quadrature.
    d_f = 2.0 / ((2 * np.pi) ** 2 * L_TRUE * f**3) * 1e3
    assert_allclose(s1**2, s0**2 + d_f**2, rtol=1e-9)


@pytest.mark.parametrize("coupling", [None, 150e-12])
def test_sigma_matches_numerical_propagation(coupling):
    # First-order propagation σ² = J·Σ·Jᵀ + (∂C/∂f·σ_f)², J taken by central differences of
    # the conversion itself with L and C_stray perturbed: an independent route to the same σ.
    rng = np.random.default_rng(5)
    refs = [0.0, 10e-12, 33e-12, 100e-12, 150e-12]
    f_refs = readings(refs, coupling=coupling) + rng.normal(0.0, 300.0, 5)
    cal = calibrate_oscillator(refs, f_refs, coupling_f=coupling)
    f = readings([20e-12, 80e-12], coupling=coupling)

    def c_of(big_l, stray, freq=f):
        return capacitance_from_frequency(freq, replace(cal, inductance_h=big_l, stray_f=stray))[0]

    h_l, h_s, h_f = cal.inductance_h * 1e-6, cal.stray_f * 1e-6, 1.0
    j_l = (
        c_of(cal.inductance_h + h_l, cal.stray_f) - c_of(cal.inductance_h - h_l, cal.stray_f)
    ) / (2 * h_l)
    j_s = (
        c_of(cal.inductance_h, cal.stray_f + h_s) - c_of(cal.inductance_h, cal.stray_f - h_s)
    ) / (2 * h_s)
    j_f = (
        c_of(cal.inductance_h, cal.stray_f, f + h_f) - c_of(cal.inductance_h, cal.stray_f, f - h_f)
    ) / (2 * h_f)
    cov = np.array(cal.covariance)
    var = j_l**2 * cov[0, 0] + 2 * j_l * j_s * cov[0, 1] + j_s**2 * cov[1, 1] + (j_f * 400.0) ** 2
    _, sigma = capacitance_from_frequency(f, cal, freq_sigma_hz=400.0)
    assert_allclose(sigma, np.sqrt(var), rtol=1e-5)


def test_relative_capacitance_is_capacitance_over_stray():
    parts = np.array([3e-12, 38e-12, 150e-12])
    f0 = thomson(L_TRUE, STRAY_TRUE)
    assert_allclose(relative_capacitance(readings(parts), f0), parts / STRAY_TRUE, rtol=1e-12)


# ---- refusals -------------------------------------------------------------------------------


@pytest.fixture
def cal():
    refs = [0.0, 22e-12, 47e-12, 100e-12]
    return calibrate_oscillator(refs, readings(refs))


def test_it_refuses_a_reading_at_the_open_frequency(cal):
    f = [readings([10e-12])[0], cal.open_frequency_hz]
    with pytest.raises(PhysicsInputError, match=r"freq_hz\[1\].*at or above the open"):
        capacitance_from_frequency(f, cal)


def test_it_refuses_a_reading_above_the_open_frequency(cal):
    with pytest.raises(PhysicsInputError, match=r"freq_hz\[0\] = 13000000\.0 Hz"):
        capacitance_from_frequency([13.0e6], cal)


@pytest.mark.parametrize("bad", [math.nan, math.inf, 0.0, -5e6])
def test_it_refuses_non_physical_readings(cal, bad):
    with pytest.raises(PhysicsInputError, match=r"freq_hz\[2\]"):
        capacitance_from_frequency([5e6, 6e6, bad], cal)


def test_it_refuses_a_reading_beyond_the_coupling_capacitor():
    cc = 20e-12
    refs = [0.0, 10e-12, 47e-12]
    cal = calibrate_oscillator(refs, readings(refs, coupling=cc), coupling_f=cc)
    f_bad = thomson(L_TRUE, STRAY_TRUE + 25e-12)  # 25 pF behind a 20 pF series capacitor
    with pytest.raises(PhysicsInputError, match=r"freq_hz\[1\].*coupling capacitor"):
        capacitance_from_frequency([readings([5e-12])[0], f_bad], cal)


@pytest.mark.parametrize(
    "refs, freqs, match",
    [
        ([0.0, 0.0, 0.0], [10e6, 10e6, 10e6], "two distinct"),
        ([47e-12], [9e6], "two distinct"),
        ([0.0, 10e-12], [10e6], "shape"),
        ([0.0, -10e-12], [10e6, 9e6], r"ref_capacitance_f\[1\]"),
        ([0.0, 10e-12], [10e6, math.nan], r"freq_hz\[1\]"),
        ([0.0, 10e-12], [9e6, 10e6], "Thomson"),
    ],
)
def test_calibration_refuses_bad_reference_sets(refs, freqs, match):
    with pytest.raises(PhysicsInputError, match=match):
        calibrate_oscillator(refs, freqs)


def test_calibration_refuses_bad_coupling_and_sigma():
    refs, f = [0.0, 10e-12], [10e6, 9e6]
    with pytest.raises(PhysicsInputError, match="coupling_f"):
        calibrate_oscillator(refs, f, coupling_f=0.0)
    with pytest.raises(PhysicsInputError, match="freq_sigma_hz"):
        calibrate_oscillator(refs, f, freq_sigma_hz=[1.0, -1.0])


def test_relative_capacitance_refuses_readings_at_or_above_open():
    with pytest.raises(PhysicsInputError, match=r"freq_hz\[1\] = 30000000\.0 Hz"):
        relative_capacitance([28e6, 30e6], 29.6e6)
    with pytest.raises(PhysicsInputError, match=r"freq_hz\[0\]"):
        relative_capacitance([29.6e6], 29.6e6)
    with pytest.raises(PhysicsInputError, match="open_freq_hz"):
        relative_capacitance([28e6], math.nan)


def test_malformed_calibration_record_is_refused():
    with pytest.raises(PhysicsInputError, match="malformed"):
        OscillatorCalibration.from_dict({"inductance_h": 1e-6})
