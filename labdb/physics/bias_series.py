"""A bias series of impedance sweeps of one unit turned into C–V and Q–V at one test frequency.

Each sweep (one reverse bias) gets its series R–L–C equivalent (:mod:`labdb.physics.impedance`);
at the chosen frequency f the C–V point is the model's effective capacitance
Ceff(f) = −1/(2πf·X) = Cs/(1 − ω²LsCs) and the Q–V point its Q(f) = |X|/Rs. The model rather
than the nearest reading is used because a reading's R is lost in the noise far below
resonance (|X| ≫ R), while the fit takes R from where it is measured well.

Default frequency: the lowest self-resonant frequency of the series divided by
:data:`~labdb.physics.impedance.WELL_BELOW` (10), rounded down to a 1-2-5 value and kept inside
the frequency range every sweep covers — the highest tidy frequency that is still well below
self-resonance for every bias, so Ceff stays within ~1 % of Cs there.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from labdb.physics.errors import PhysicsInputError
from labdb.physics.impedance import WELL_BELOW, SeriesRLCFit, fit_series_rlc

#: Fewest distinct biases a series needs to be a C–V sweep.
MIN_BIASES = 3


@dataclass(frozen=True)
class ImpedanceSweep:
    """One impedance sweep at one bias.

    Attributes
    ----------
    bias_v : float
        Reverse bias [V] (positive).
    frequency_hz : ndarray, shape (n,)
        Test frequency [Hz].
    z_ohm : ndarray of complex, shape (n,)
        Measured impedance [ohm].
    fit : SeriesRLCFit or None
        Its series R–L–C equivalent when already known (fitted here otherwise).
    """

    bias_v: float
    frequency_hz: Any
    z_ohm: Any
    fit: SeriesRLCFit | None = None


@dataclass
class BiasSeriesCV:
    """C–V and Q–V of a bias series at one test frequency (SI).

    Attributes
    ----------
    frequency_hz : float
        Test frequency of the derived points [Hz].
    bias_v : ndarray, shape (m,)
        Reverse bias [V], ascending.
    capacitance_f : ndarray, shape (m,)
        Effective capacitance Ceff(f) [F].
    capacitance_sigma_f : ndarray, shape (m,)
        First-order standard error of Ceff [F] (from the fits' covariance).
    q : ndarray, shape (m,)
        Q(f) [1] (``inf`` where Rs fitted to 0).
    srf_hz : ndarray, shape (m,)
        Self-resonant frequency of each sweep's equivalent [Hz].
    fits : list of SeriesRLCFit
        The equivalents, in bias order.
    order : ndarray of int, shape (m,)
        Index of each point's sweep in the input sequence.
    notes : list of str
        How the frequency was chosen, and cautions.
    """

    frequency_hz: float
    bias_v: np.ndarray
    capacitance_f: np.ndarray
    capacitance_sigma_f: np.ndarray
    q: np.ndarray
    srf_hz: np.ndarray
    fits: list[SeriesRLCFit]
    order: np.ndarray
    notes: list[str] = field(default_factory=list)


def tidy_down(value: float) -> float:
    """The largest 1, 2 or 5 × 10ᵏ not above ``value`` (> 0), e.g. 57.3e6 → 50e6."""
    if not (value > 0 and math.isfinite(value)):
        raise PhysicsInputError(f"tidy_down needs a positive finite number, got {value}")
    k = math.floor(math.log10(value))
    for m in (5.0, 2.0, 1.0):
        # a hair of slack so 2e6 given as 1.9999999999e6 by rounding still maps to 2e6
        if m * 10.0**k <= value * (1 + 1e-12):
            return m * 10.0**k
    return 10.0 ** (k - 1) * 5.0  # pragma: no cover - value < 10**k is impossible


def default_frequency(
    fits: Sequence[SeriesRLCFit], lo_hz: float, hi_hz: float
) -> tuple[float, str]:
    """The default test frequency [Hz] of a series, and a note saying how it was found.

    Parameters
    ----------
    fits : sequence of SeriesRLCFit
        The series' equivalents.
    lo_hz, hi_hz : float
        The frequency range every sweep covers [Hz].
    """
    srf = min(fit.srf_hz for fit in fits)
    if not math.isfinite(srf):
        return hi_hz, (
            f"no sweep shows its self-resonance; used the highest common frequency, {hi_hz:.4g} Hz"
        )
    target = tidy_down(srf / WELL_BELOW)
    if target > hi_hz:
        return hi_hz, (
            f"lowest self-resonance {srf:.4g} Hz; SRF/{WELL_BELOW:g} lies above the sweeps, so "
            f"used the highest common frequency, {hi_hz:.4g} Hz"
        )
    if target < lo_hz:
        return lo_hz, (
            f"lowest self-resonance {srf:.4g} Hz; even the lowest common frequency "
            f"{lo_hz:.4g} Hz is not below SRF/{WELL_BELOW:g}, so C there is not the junction's"
        )
    return target, (
        f"frequency {target:.4g} Hz: the lowest self-resonance of the series, {srf:.4g} Hz, "
        f"divided by {WELL_BELOW:g} and rounded down to a 1-2-5 value"
    )


def bias_series_to_cv(
    sweeps: Sequence[ImpedanceSweep], frequency_hz: float | None = None
) -> BiasSeriesCV:
    """C–V and Q–V at one test frequency from impedance sweeps of one unit at several biases.

    Parameters
    ----------
    sweeps : sequence of ImpedanceSweep, length m ≥ 3
        One sweep per reverse bias (biases distinct); sweeps without a fit are fitted.
    frequency_hz : float, optional
        Test frequency [Hz] inside the range all sweeps cover; default: see the module
        docstring (lowest SRF / 10, rounded down to 1-2-5).

    Returns
    -------
    BiasSeriesCV
        Points in ascending bias.

    Raises
    ------
    PhysicsInputError
        Fewer than :data:`MIN_BIASES` sweeps, a repeated bias, no common frequency range,
        a frequency outside it, or a frequency at or above some sweep's self-resonance
        (there the part is inductive and has no capacitance).
    """
    if len(sweeps) < MIN_BIASES:
        raise PhysicsInputError(
            f"{len(sweeps)} impedance sweeps; a C–V needs at least {MIN_BIASES} biases"
        )
    bias = np.array([float(s.bias_v) for s in sweeps])
    if not np.isfinite(bias).all():
        raise PhysicsInputError("every sweep needs a finite bias_v")
    values, counts = np.unique(bias, return_counts=True)
    if np.any(counts > 1):
        raise PhysicsInputError(
            f"two sweeps at {values[counts > 1][0]:g} V; keep one sweep per bias"
        )
    fits = [s.fit or fit_series_rlc(s.frequency_hz, s.z_ohm) for s in sweeps]
    lo = max(fit.frequency_min_hz for fit in fits)
    hi = min(fit.frequency_max_hz for fit in fits)
    if lo > hi:
        raise PhysicsInputError(
            f"the sweeps share no frequency range (highest start {lo:g} Hz is above the "
            f"lowest end {hi:g} Hz)"
        )
    notes: list[str] = []
    if frequency_hz is None:
        f, note = default_frequency(fits, lo, hi)
        notes.append(note)
    else:
        f = float(frequency_hz)
        if not (lo * (1 - 1e-9) <= f <= hi * (1 + 1e-9)):
            raise PhysicsInputError(
                f"frequency_hz = {f:g} Hz is outside the range every sweep covers, "
                f"{lo:g} Hz to {hi:g} Hz"
            )
    order = np.argsort(bias, kind="stable")
    fits = [fits[i] for i in order]
    srf = np.array([fit.srf_hz for fit in fits])
    above = np.flatnonzero(srf <= f)
    if above.size:
        i = above[0]
        raise PhysicsInputError(
            f"at {f:.4g} Hz the unit at {bias[order][i]:g} V is at or above its self-resonance "
            f"({srf[i]:.4g} Hz): it is inductive there and has no capacitance"
        )
    near = np.flatnonzero(f > srf / WELL_BELOW)
    if near.size:
        worst = float(np.max(1.0 / (1.0 - (f / srf[near]) ** 2) - 1.0))
        notes.append(
            f"{near.size} of {len(fits)} biases are within a decade of self-resonance at "
            f"{f:.4g} Hz: Ceff exceeds Cs there by up to {worst:.1%}"
        )
    cap = np.array([fit.ceff_at([f])[0] for fit in fits])
    sigma = np.array([fit.ceff_sigma_at(f) for fit in fits])
    q = np.array([fit.q_at([f])[0] for fit in fits])
    return BiasSeriesCV(
        frequency_hz=f,
        bias_v=bias[order],
        capacitance_f=cap,
        capacitance_sigma_f=sigma,
        q=q,
        srf_hz=srf,
        fits=fits,
        order=order,
        notes=notes,
    )
