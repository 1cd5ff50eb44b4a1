"""Oscillator fixtures: calibration from reference capacitors and frequency-to-capacitance.

An oscillator fixture reads the frequency of an LC oscillator whose tank the unit loads.
Thomson's formula f = 1/(2π√(L·C)) with the tank's own (stray) capacitance in parallel
gives, for a reading with capacitance C_x in the socket,

    1/(2πf)² = L·C_stray + L·C_x,

a straight line in C_x. Reference capacitors of known value calibrate it (slope L, intercept
L·C_stray); afterwards each reading converts back to C_x.

Series coupling capacitor. Some fixtures reach the socket through a capacitor Cc (it keeps
the bias off the tank). The tank then sees C_x·Cc/(C_x + Cc) instead of C_x. Reference
readings are taken in the same socket, so they pass through Cc too: ``calibrate_oscillator``
converts each reference value to that effective capacitance before the straight-line fit,
and ``capacitance_from_frequency`` removes Cc again with C = Ceff·Cc/(Cc − Ceff). Cc is
taken as exact; capacitance between Cc and the socket is not separated from the part.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from labdb.physics.errors import PhysicsInputError

TWO_PI = 2.0 * math.pi


@dataclass(frozen=True)
class OscillatorCalibration:
    """Inductance and stray capacitance of an oscillator fixture, from reference readings.

    Attributes
    ----------
    inductance_h : float
        Tank inductance L [H].
    stray_f : float
        Fixture's own (stray) capacitance at the tank node C_stray [F].
    covariance : list of list of float, shape (2, 2)
        Covariance of (L [H], C_stray [F]) in that order, SI units. Entries are ``inf`` when
        the data cannot determine it (exactly two readings and no frequency uncertainty
        given): unknown is not the same as exact, so it is never reported as zero.
    residuals_hz : list of float, shape (n,)
        Measured minus fitted frequency for each reference reading [Hz].
    ref_capacitance_f : list of float, shape (n,)
        Reference capacitance as fitted into the socket [F] (0 for the open fixture).
    freq_hz : list of float, shape (n,)
        Frequency read with each reference [Hz].
    coupling_f : float or None
        Series coupling capacitor Cc between tank and socket [F], or None.
    """

    inductance_h: float
    stray_f: float
    covariance: list[list[float]]
    residuals_hz: list[float]
    ref_capacitance_f: list[float]
    freq_hz: list[float]
    coupling_f: float | None = None

    @property
    def open_frequency_hz(self) -> float:
        """Frequency with nothing in the socket, 1/(2π√(L·C_stray)) [Hz]."""
        return 1.0 / (TWO_PI * math.sqrt(self.inductance_h * self.stray_f))

    @property
    def covariance_known(self) -> bool:
        """True when every covariance entry is finite."""
        return all(math.isfinite(x) for row in self.covariance for x in row)

    def to_dict(self) -> dict[str, Any]:
        """Plain, strict-JSON-safe dict (an undetermined covariance is written as None)."""
        return {
            "inductance_h": self.inductance_h,
            "stray_f": self.stray_f,
            "covariance": [list(r) for r in self.covariance] if self.covariance_known else None,
            "residuals_hz": list(self.residuals_hz),
            "ref_capacitance_f": list(self.ref_capacitance_f),
            "freq_hz": list(self.freq_hz),
            "coupling_f": self.coupling_f,
        }

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> OscillatorCalibration:
        """Inverse of :meth:`to_dict`."""
        try:
            cov = data["covariance"]
            if cov is None:
                cov = [[math.inf, 0.0], [0.0, math.inf]]
            coupling = data.get("coupling_f")
            return cls(
                inductance_h=float(data["inductance_h"]),
                stray_f=float(data["stray_f"]),
                covariance=[[float(x) for x in row] for row in cov],
                residuals_hz=[float(x) for x in data["residuals_hz"]],
                ref_capacitance_f=[float(x) for x in data["ref_capacitance_f"]],
                freq_hz=[float(x) for x in data["freq_hz"]],
                coupling_f=None if coupling is None else float(coupling),
            )
        except (KeyError, TypeError, ValueError) as exc:
            raise PhysicsInputError(f"calibration record is malformed: {exc!r}") from None


def _series(c: np.ndarray, coupling_f: float | None) -> np.ndarray:
    """Capacitance c [F] seen through a series coupling capacitor [F] (or c itself)."""
    if coupling_f is None:
        return c
    return c * coupling_f / (c + coupling_f)


def _check_coupling(coupling_f: float | None) -> float | None:
    if coupling_f is None:
        return None
    cc = float(coupling_f)
    if not (math.isfinite(cc) and cc > 0):
        raise PhysicsInputError(f"coupling_f must be a positive capacitance in F, got {cc!r}")
    return cc


def _frequencies(freq_hz: Any, name: str = "freq_hz") -> np.ndarray:
    f = np.atleast_1d(np.asarray(freq_hz, dtype=float))
    if f.ndim != 1:
        raise PhysicsInputError(f"{name} must be a scalar or a 1-D sequence, got shape {f.shape}")
    bad = np.flatnonzero(~(np.isfinite(f) & (f > 0)))
    if bad.size:
        i = int(bad[0])
        raise PhysicsInputError(
            f"{name}[{i}] = {float(f[i])!r} Hz: a frequency must be finite and positive"
        )
    return f


def _sigmas(sigma: Any, n: int, name: str) -> np.ndarray:
    s = np.broadcast_to(np.asarray(sigma, dtype=float), (n,)).copy()
    bad = np.flatnonzero(~(np.isfinite(s) & (s >= 0)))
    if bad.size:
        i = int(bad[0])
        raise PhysicsInputError(f"{name}[{i}] = {float(s[i])!r} Hz: must be finite and ≥ 0")
    return s


def calibrate_oscillator(
    ref_capacitance_f: Any,
    freq_hz: Any,
    coupling_f: float | None = None,
    *,
    freq_sigma_hz: Any = None,
) -> OscillatorCalibration:
    """Inductance and stray capacitance of an oscillator fixture from reference readings.

    Fits 1/(2πf)² = L·C_stray + L·C_eff by weighted least squares in 1/(2πf)², where C_eff
    is the reference value (through the coupling capacitor when there is one) and each
    reading is weighted by the uncertainty its frequency carries into 1/(2πf)². The slope is L, the
    intercept L·C_stray; their covariance is carried to (L, C_stray) with the Jacobian of
    (a, b) ↦ (a, b/a).

    Covariance: with ``freq_sigma_hz`` given, the fit is weighted by the propagated
    uncertainty of 1/(2πf)² and the covariance is absolute (valid from two readings on).
    Without it, every reading is taken as equally uncertain in Hz and the scatter about the
    line sets the scale, which needs at least three readings; with exactly two the covariance is undetermined and reported as ``inf``.

    Parameters
    ----------
    ref_capacitance_f : array_like, shape (n,)
        Known reference capacitance in the socket for each reading [F]; 0 for the open
        fixture. Needs at least two distinct values.
    freq_hz : array_like, shape (n,)
        Oscillator frequency read with each reference [Hz].
    coupling_f : float, optional
        Series coupling capacitor between tank and socket [F]; the references are read
        through it.
    freq_sigma_hz : float or array_like, shape (n,), optional
        Standard uncertainty of each frequency reading [Hz].

    Returns
    -------
    OscillatorCalibration
    """
    cref = np.atleast_1d(np.asarray(ref_capacitance_f, dtype=float))
    f = _frequencies(freq_hz)
    if cref.ndim != 1 or cref.shape != f.shape:
        raise PhysicsInputError(
            f"ref_capacitance_f has shape {cref.shape} but freq_hz has shape {f.shape}; "
            "give one reference value per reading"
        )
    bad = np.flatnonzero(~(np.isfinite(cref) & (cref >= 0)))
    if bad.size:
        i = int(bad[0])
        raise PhysicsInputError(
            f"ref_capacitance_f[{i}] = {float(cref[i])!r} F: a reference must be finite and ≥ 0"
        )
    if np.unique(cref).size < 2:
        raise PhysicsInputError(
            "calibration needs readings with at least two distinct reference capacitances "
            f"(got {np.unique(cref).size} distinct in {cref.size} readings)"
        )
    cc = _check_coupling(coupling_f)
    x = _series(cref, cc)
    y = 1.0 / (TWO_PI * f) ** 2  # [s²] = L·(C_stray + C_eff)
    n = x.size

    # Weight by the uncertainty of 1/(2πf)² carried from the frequency, σ_y = 2·y·σ_f/f: it
    # changes several-fold across a calibration, and an unweighted fit would misstate the
    # covariance. Without stated σ_f, every reading is taken as equally uncertain in Hz.
    sigma_f = 1.0 if freq_sigma_hz is None else _sigmas(freq_sigma_hz, n, "freq_sigma_hz")
    if np.any(sigma_f == 0):
        raise PhysicsInputError("freq_sigma_hz must be > 0 for every reading when given")
    w = 1.0 / (2.0 * y * sigma_f / f) ** 2
    design = np.column_stack([x, np.ones(n)])
    normal = design.T @ (w[:, None] * design)
    slope, intercept = np.linalg.solve(normal, design.T @ (w * y))
    if not slope > 0 or not intercept > 0:
        raise PhysicsInputError(
            "the readings do not fall as Thomson's formula says (fitted "
            f"L = {slope:.4g} H, L·C_stray = {intercept:.4g} s²): frequency must drop as the "
            "reference capacitance rises; check the reference values and their order"
        )
    inv = np.linalg.inv(normal)
    if freq_sigma_hz is not None:
        cov_ab = inv
    elif n > 2:
        resid_y = y - (slope * x + intercept)
        cov_ab = inv * float(w @ resid_y**2) / (n - 2)
    else:
        cov_ab = None

    inductance = float(slope)
    stray = float(intercept / slope)
    if cov_ab is None:
        cov = [[math.inf, 0.0], [0.0, math.inf]]
    else:
        jac = np.array([[1.0, 0.0], [-intercept / slope**2, 1.0 / slope]])
        cov = (jac @ cov_ab @ jac.T).tolist()
    fitted = 1.0 / (TWO_PI * np.sqrt(inductance * (stray + x)))
    return OscillatorCalibration(
        inductance_h=inductance,
        stray_f=stray,
        covariance=cov,
        residuals_hz=(f - fitted).tolist(),
        ref_capacitance_f=cref.tolist(),
        freq_hz=f.tolist(),
        coupling_f=cc,
    )


def capacitance_from_frequency(
    freq_hz: Any,
    calibration: OscillatorCalibration,
    freq_sigma_hz: Any = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Capacitance in the socket from oscillator readings, with propagated uncertainty.

    C_eff = 1/((2πf)²·L) − C_stray; with a coupling capacitor Cc the part's own capacitance
    is C = C_eff·Cc/(Cc − C_eff). The standard uncertainty combines the calibration
    covariance of (L, C_stray) and the optional frequency uncertainty to first order.

    Parameters
    ----------
    freq_hz : float or array_like, shape (n,)
        Oscillator readings [Hz]; each must lie below the open-fixture frequency.
    calibration : OscillatorCalibration
        The fixture's calibration.
    freq_sigma_hz : float or array_like, shape (n,), optional
        Standard uncertainty of each reading [Hz].

    Returns
    -------
    capacitance_f : ndarray, shape (n,)
        Capacitance of the part in the socket [F].
    sigma_f : ndarray, shape (n,)
        Its standard uncertainty [F] (``inf`` when the calibration covariance is unknown).
    """
    f = _frequencies(freq_hz)
    big_l, stray = calibration.inductance_h, calibration.stray_f
    f_open = calibration.open_frequency_hz
    above = np.flatnonzero(f >= f_open)
    if above.size:
        i = int(above[0])
        raise PhysicsInputError(
            f"freq_hz[{i}] = {float(f[i])!r} Hz is at or above the open-fixture frequency "
            f"{f_open!r} Hz: it would mean zero or negative capacitance (fixture drifted "
            "since calibration, or a mis-typed reading)"
        )
    inv_w2l = 1.0 / ((TWO_PI * f) ** 2 * big_l)  # total tank capacitance [F]
    c_eff = inv_w2l - stray
    # Partial derivatives of C_eff with respect to L, C_stray and f.
    d_l = -inv_w2l / big_l
    d_s = -np.ones_like(f)
    d_f = -2.0 * inv_w2l / f
    cc = calibration.coupling_f
    if cc is not None:
        over = np.flatnonzero(c_eff >= cc)
        if over.size:
            i = int(over[0])
            raise PhysicsInputError(
                f"freq_hz[{i}] = {float(f[i])!r} Hz gives {c_eff[i]:.6g} F behind the coupling "
                f"capacitor, not below its {cc:.6g} F: no finite capacitance in series "
                "with it gives that reading"
            )
        chain = cc**2 / (cc - c_eff) ** 2  # dC/dC_eff
        c = c_eff * cc / (cc - c_eff)
        d_l, d_s, d_f = d_l * chain, d_s * chain, d_f * chain
    else:
        c = c_eff
    cov = np.asarray(calibration.covariance, dtype=float)
    var = d_l**2 * cov[0, 0] + d_s**2 * cov[1, 1]
    if cov[0, 1] != 0:  # skip 0·inf when the covariance is undetermined
        var = var + 2.0 * d_l * d_s * cov[0, 1]
    if freq_sigma_hz is not None:
        var = var + (d_f * _sigmas(freq_sigma_hz, f.size, "freq_sigma_hz")) ** 2
    return c, np.sqrt(var)


def relative_capacitance(freq_hz: Any, open_freq_hz: float) -> np.ndarray:
    """Capacitance in units of the fixture's own capacitance, (f0/f)² − 1.

    Needs no inductance: from Thomson's formula, C_x/C_stray = (f0/f)² − 1 where f0 is the
    open-fixture frequency.

    Parameters
    ----------
    freq_hz : float or array_like, shape (n,)
        Readings with the part in the socket [Hz], each below ``open_freq_hz``.
    open_freq_hz : float
        Reading with nothing in the socket [Hz].

    Returns
    -------
    ndarray, shape (n,)
        C_x / C_stray [dimensionless].
    """
    f0 = float(open_freq_hz)
    if not (math.isfinite(f0) and f0 > 0):
        raise PhysicsInputError(f"open_freq_hz = {f0!r} Hz: must be finite and positive")
    f = _frequencies(freq_hz)
    above = np.flatnonzero(f >= f0)
    if above.size:
        i = int(above[0])
        raise PhysicsInputError(
            f"freq_hz[{i}] = {float(f[i])!r} Hz is at or above the open-fixture frequency {f0!r} Hz"
        )
    return (f0 / f) ** 2 - 1.0
