"""Mott–Schottky analysis: built-in potential and doping from 1/C² against reverse bias.

For a one-sided step junction (or a two-sided one with N = Na·Nd/(Na + Nd)) of area A in a
material of permittivity ε = ε0·εr (Sze & Ng, *Physics of Semiconductor Devices*, 3rd ed.,
ch. 2; Neamen, *Semiconductor Physics and Devices*, 4th ed., ch. 7):

    1/C² = 2·(Vbi + V_R) / (q·ε·N·A²).

A straight line through 1/C² against V_R has slope 2/(q·ε·N·A²), so N = 2/(q·ε·A²·|slope|),
and meets the voltage axis at V_R = −Vbi. Here Vbi is that intercept as it stands: we do NOT
subtract the further 2kT/q (majority-carrier tail correction) that Sze mentions.

The differential profile applies the same relation point by point: depletion depth
W = ε·A/C and N(W) = 2/(q·ε·A²·d(1/C²)/dV_R), the derivative taken with ``np.gradient``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import constants

from labdb.physics.errors import PhysicsInputError

Q = constants.elementary_charge  # [C]
EPS0 = constants.epsilon_0  # [F/m]


@dataclass(frozen=True)
class MottSchottkyResult:
    """Straight-line fit of 1/C² against reverse bias, and the differential doping profile.

    Attributes
    ----------
    slope : float
        d(1/C²)/dV_R of the fitted line [F⁻²/V].
    slope_stderr : float
        Its standard error [F⁻²/V].
    intercept : float
        1/C² of the line at V_R = 0 [F⁻²].
    intercept_stderr : float
        Its standard error [F⁻²].
    r_squared : float
        Coefficient of determination of the line [dimensionless].
    built_in_v : float
        Built-in potential Vbi = intercept/slope [V] (no 2kT/q correction).
    built_in_stderr_v : float
        Its standard error [V], from the slope–intercept covariance.
    doping_m3 : float
        Doping N = 2/(q·ε0·εr·A²·|slope|) [m⁻³].
    doping_stderr_m3 : float
        Its standard error [m⁻³].
    n_points : int
        Points used in the line fit.
    bias_v : ndarray, shape (n,)
        All biases, sorted ascending [V].
    depth_m : ndarray, shape (n,)
        Depletion depth W = ε·A/C at each bias [m].
    doping_profile_m3 : ndarray, shape (n,)
        N(W) [m⁻³]; NaN where 1/C² does not rise with bias (no physical reading).
    """

    slope: float
    slope_stderr: float
    intercept: float
    intercept_stderr: float
    r_squared: float
    built_in_v: float
    built_in_stderr_v: float
    doping_m3: float
    doping_stderr_m3: float
    n_points: int
    bias_v: np.ndarray
    depth_m: np.ndarray
    doping_profile_m3: np.ndarray


def _check_inputs(
    bias_v: Any, capacitance_f: Any, area_m2: float, eps_r: float
) -> tuple[np.ndarray, np.ndarray]:
    v = np.asarray(bias_v, dtype=float)
    c = np.asarray(capacitance_f, dtype=float)
    if v.ndim != 1 or c.shape != v.shape:
        raise PhysicsInputError(
            f"bias_v and capacitance_f must be 1-D and of equal length, got shapes "
            f"{v.shape} and {c.shape}"
        )
    for name, arr, unit in (("bias_v", v, "V"), ("capacitance_f", c, "F")):
        bad = np.flatnonzero(~np.isfinite(arr))
        if bad.size:
            i = int(bad[0])
            raise PhysicsInputError(f"{name}[{i}] = {float(arr[i])!r} {unit} is not finite")
    bad = np.flatnonzero(c <= 0)
    if bad.size:
        i = int(bad[0])
        raise PhysicsInputError(f"capacitance_f[{i}] = {float(c[i])!r} F: capacitance must be > 0")
    for name, val, unit in (("area_m2", area_m2, "m²"), ("eps_r", eps_r, "")):
        if not (math.isfinite(float(val)) and float(val) > 0):
            raise PhysicsInputError(f"{name} must be finite and positive {unit}, got {val!r}")
    if v.size < 3:
        raise PhysicsInputError(f"Mott–Schottky analysis needs at least 3 points, got {v.size}")
    order = np.argsort(v, kind="stable")
    v, c = v[order], c[order]
    dup = np.flatnonzero(np.diff(v) == 0)
    if dup.size:
        raise PhysicsInputError(
            f"bias_v repeats the value {float(v[dup[0]])!r} V: give one capacitance per bias "
            "(average repeated readings first)"
        )
    return v, c


def mott_schottky(
    bias_v: Any,
    capacitance_f: Any,
    area_m2: float,
    eps_r: float,
    bias_range: tuple[float, float] | None = None,
) -> MottSchottkyResult:
    """Built-in potential and doping of a junction from its C–V sweep.

    Parameters
    ----------
    bias_v : array_like, shape (n,)
        Reverse bias [V], positive for reverse; distinct values, any order.
    capacitance_f : array_like, shape (n,)
        Depletion capacitance at each bias [F] (package capacitance removed).
    area_m2 : float
        Junction area A [m²].
    eps_r : float
        Relative permittivity of the depleted material (e.g. 11.7 for silicon).
    bias_range : tuple of float, shape (2,), optional
        Inclusive range (v_min, v_max) [V] of the linear region used for the line;
        all points when omitted. The differential profile always uses all points.

    Returns
    -------
    MottSchottkyResult
    """
    v, c = _check_inputs(bias_v, capacitance_f, area_m2, eps_r)
    area, eps = float(area_m2), EPS0 * float(eps_r)
    y = 1.0 / c**2
    if bias_range is None:
        sel = np.ones(v.size, dtype=bool)
    else:
        lo, hi = (float(b) for b in bias_range)
        if not (math.isfinite(lo) and math.isfinite(hi) and lo < hi):
            raise PhysicsInputError(f"bias_range = {bias_range!r} V: need finite v_min < v_max")
        sel = (v >= lo) & (v <= hi)
    n = int(sel.sum())
    if n < 3:
        raise PhysicsInputError(
            f"bias_range {bias_range!r} V holds {n} points; the line needs at least 3"
        )
    xs, ys = v[sel], y[sel]
    # Centre both axes first: 1/C² is of order 1e24 F⁻² and must not lose digits.
    x_mean, y_mean = xs.mean(), ys.mean()
    dx, dy = xs - x_mean, ys - y_mean
    sxx = float(dx @ dx)
    slope = float(dx @ dy) / sxx
    intercept = y_mean - slope * x_mean
    if not slope > 0:
        raise PhysicsInputError(
            f"1/C² does not rise with reverse bias over the range used (slope {slope:.4g} "
            "F⁻²/V): not a depletion junction there; choose the linear region with bias_range"
        )
    resid = dy - slope * dx
    rss = float(resid @ resid)
    tss = float(dy @ dy)
    s2 = rss / (n - 2)
    var_slope = s2 / sxx
    var_intercept = s2 * (1.0 / n + x_mean**2 / sxx)
    cov_si = -x_mean * var_slope
    vbi = intercept / slope
    # Vbi = b/a: first-order propagation with the slope–intercept covariance.
    grad = np.array([-intercept / slope**2, 1.0 / slope])
    cov = np.array([[var_slope, cov_si], [cov_si, var_intercept]])
    vbi_var = max(float(grad @ cov @ grad), 0.0)
    doping = 2.0 / (Q * eps * area**2 * slope)

    dydv = np.gradient(y, v, edge_order=2)  # second order at the ends too (n ≥ 3 here)
    rising = dydv > 0
    profile = np.full(v.size, np.nan)
    profile[rising] = 2.0 / (Q * eps * area**2 * dydv[rising])
    return MottSchottkyResult(
        slope=slope,
        slope_stderr=math.sqrt(var_slope),
        intercept=float(intercept),
        intercept_stderr=math.sqrt(var_intercept),
        r_squared=1.0 - rss / tss if tss > 0 else 1.0,
        built_in_v=float(vbi),
        built_in_stderr_v=math.sqrt(vbi_var),
        doping_m3=float(doping),
        doping_stderr_m3=float(doping * math.sqrt(var_slope) / slope),
        n_points=n,
        bias_v=v,
        depth_m=eps * area / c,
        doping_profile_m3=profile,
    )
