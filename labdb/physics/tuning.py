"""Tuning with a junction: swing, tank frequency, tuning slope, bias for a frequency, band cover.

The tank is an inductance L in parallel with a fixed capacitance C_fixed and the junction,
the junction optionally reached through a series coupling capacitor Cc:

    C_t(V) = C_fixed + C_j(V)·Cc/(C_j(V) + Cc),     f(V) = 1/(2π√(L·C_t(V)))   (Thomson).

C_j(V) is the SPICE junction model of :mod:`labdb.physics.junction` (package capacitance CP
included). It falls as reverse bias rises, so f(V) rises monotonically with reverse bias.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Literal, overload

import numpy as np
from scipy.optimize import brentq

from labdb.physics.errors import PhysicsInputError
from labdb.physics.junction import DEFAULT_FC, capacitance_of, params_of

TWO_PI = 2.0 * math.pi


def _positive(value: float, name: str, unit: str) -> float:
    v = float(value)
    if not (math.isfinite(v) and v > 0):
        raise PhysicsInputError(f"{name} must be finite and positive [{unit}], got {v!r}")
    return v


def _tank_args(
    inductance_h: float, fixed_f: float, coupling_f: float | None
) -> tuple[float, float, float | None]:
    big_l = _positive(inductance_h, "inductance_h", "H")
    fixed = float(fixed_f)
    if not (math.isfinite(fixed) and fixed >= 0):
        raise PhysicsInputError(f"fixed_f must be finite and ≥ 0 [F], got {fixed!r}")
    cc = None if coupling_f is None else _positive(coupling_f, "coupling_f", "F")
    return big_l, fixed, cc


def _window(window_v: Any) -> tuple[float, float]:
    try:
        v1, v2 = (float(v) for v in window_v)
    except (TypeError, ValueError):
        raise PhysicsInputError(
            f"window_v must be a pair (v_low, v_high) of reverse biases in V, got {window_v!r}"
        ) from None
    if not (math.isfinite(v1) and math.isfinite(v2) and v1 < v2):
        raise PhysicsInputError(f"window_v = ({v1!r}, {v2!r}) V: need finite v_low < v_high")
    return v1, v2


def _bias(bias_v: Any) -> np.ndarray:
    v = np.asarray(bias_v, dtype=float)
    if not np.all(np.isfinite(v)):
        i = int(np.flatnonzero(~np.isfinite(v.ravel()))[0])
        raise PhysicsInputError(f"bias_v[{i}] is not finite: {float(v.ravel()[i])!r} V")
    return v


def _dcj_dv(bias_v: np.ndarray, p: dict[str, float], fc: float) -> np.ndarray:
    """dC_j/dV_R [F/V] of the SPICE model, both branches (CP is constant)."""
    cjo, vj, m = p["cjo"], p["vj"], p["m"]
    vd = -bias_v
    depleted = vd < fc * vj
    base = np.where(depleted, 1.0 - vd / vj, 1.0)
    d_dep = -m / vj * cjo * base ** (-m - 1.0)
    d_fwd = -cjo / (1.0 - fc) ** (1.0 + m) * m / vj  # linear extension: d/dV_R = −d/dVd
    return np.where(depleted, d_dep, d_fwd)


def capacitance_ratio(fit_or_params: Any, v_low: float, v_high: float) -> float:
    """Swing C(v_low)/C(v_high) of a junction over a reverse-bias window.

    Parameters
    ----------
    fit_or_params : fit or mapping
        Junction parameters (cjo [F], vj [V], m, optional cp [F]).
    v_low, v_high : float
        Ends of the window [V], reverse bias positive, v_low < v_high.

    Returns
    -------
    float
        C(v_low)/C(v_high) [dimensionless], > 1 for a depletion junction.
    """
    v1, v2 = _window((v_low, v_high))
    c = capacitance_of(fit_or_params, np.array([v1, v2]))
    return float(c[0] / c[1])


def tank_capacitance(
    bias_v: Any, fit_or_params: Any, fixed_f: float = 0.0, coupling_f: float | None = None
) -> np.ndarray:
    """Total tank capacitance C_t(V) = C_fixed + C_j·Cc/(C_j + Cc) [F], shape like bias_v."""
    _, fixed, cc = _tank_args(1.0, fixed_f, coupling_f)
    return fixed + coupled(capacitance_of(fit_or_params, _bias(bias_v)), cc)


def coupled(cj: Any, coupling_f: float | None) -> Any:
    """The junction as the tank sees it [F]: C_j, or C_j·Cc/(C_j + Cc) through a series Cc."""
    return cj if coupling_f is None else cj * coupling_f / (cj + coupling_f)


def tank_frequency(
    bias_v: Any,
    fit_or_params: Any,
    inductance_h: float,
    fixed_f: float = 0.0,
    coupling_f: float | None = None,
) -> np.ndarray:
    """Resonant frequency of the tank at reverse bias (Thomson's formula).

    Parameters
    ----------
    bias_v : float or array_like, shape (n,)
        Reverse bias on the junction [V].
    fit_or_params : fit or mapping
        Junction parameters (cjo [F], vj [V], m, optional cp [F]).
    inductance_h : float
        Tank inductance L [H].
    fixed_f : float, optional
        Fixed capacitance in parallel with the tank [F].
    coupling_f : float, optional
        Series coupling capacitor between tank and junction [F]; None for direct connection.

    Returns
    -------
    ndarray, shape like ``bias_v``
        Resonant frequency [Hz].
    """
    big_l, _, _ = _tank_args(inductance_h, fixed_f, coupling_f)
    ct = tank_capacitance(bias_v, fit_or_params, fixed_f, coupling_f)
    return 1.0 / (TWO_PI * np.sqrt(big_l * ct))


def tuning_slope(
    bias_v: Any,
    fit_or_params: Any,
    inductance_h: float,
    fixed_f: float = 0.0,
    coupling_f: float | None = None,
) -> np.ndarray:
    """Tuning slope df/dV_R of the tank [Hz/V], analytic.

    df/dV = −f/(2·C_t) · dC_t/dC_j · dC_j/dV with dC_t/dC_j = Cc²/(C_j + Cc)² (1 without
    coupling). Arguments as in :func:`tank_frequency`.

    Returns
    -------
    ndarray, shape like ``bias_v``
        Slope [Hz/V]; positive, because f rises with reverse bias.
    """
    v = _bias(bias_v)
    _, _, cc = _tank_args(inductance_h, fixed_f, coupling_f)
    p = params_of(fit_or_params)
    f = tank_frequency(v, p, inductance_h, fixed_f, coupling_f)
    ct = tank_capacitance(v, p, fixed_f, coupling_f)
    dcj = _dcj_dv(v, p, DEFAULT_FC)
    if cc is not None:
        cj = capacitance_of(p, v)
        dcj = dcj * cc**2 / (cj + cc) ** 2
    return -f / (2.0 * ct) * dcj


def bias_for_frequency(
    target_hz: float,
    fit_or_params: Any,
    inductance_h: float,
    fixed_f: float = 0.0,
    coupling_f: float | None = None,
    *,
    window_v: tuple[float, float],
) -> float | None:
    """Reverse bias in a window that tunes the tank to a target frequency.

    f(V) is monotone in V, so a bracketing root finder (Brent) finds the one solution.

    Parameters
    ----------
    target_hz : float
        Wanted frequency [Hz].
    fit_or_params, inductance_h, fixed_f, coupling_f
        As in :func:`tank_frequency`.
    window_v : tuple of float, shape (2,)
        Bias window (v_low, v_high) [V] to search, reverse bias positive.

    Returns
    -------
    float or None
        The bias [V], or None when the target lies outside the frequencies the window gives.
    """
    target = _positive(target_hz, "target_hz", "Hz")
    v1, v2 = _window(window_v)
    p = params_of(fit_or_params)
    f1, f2 = tank_frequency(np.array([v1, v2]), p, inductance_h, fixed_f, coupling_f)
    if target == f1:
        return v1
    if target == f2:
        return v2
    if not (f1 < target < f2):
        return None

    def excess(v: float) -> float:
        return float(tank_frequency(v, p, inductance_h, fixed_f, coupling_f)) / target - 1.0

    return float(brentq(excess, v1, v2, xtol=1e-12, rtol=1e-14))


@dataclass(frozen=True)
class BandCoverage:
    """Whether a junction tunes a tank across a band over a bias window.

    Attributes
    ----------
    f_min_hz, f_max_hz : float
        Tank frequency at the window's low and high bias [Hz].
    covers : bool
        True when [f_low, f_high] lies inside [f_min, f_max].
    bias_low_v, bias_high_v : float or None
        Bias giving the band's lower and upper edge [V], None when outside the window.
    centre_hz : float
        Geometric band centre √(f_low·f_high) [Hz].
    slope_at_centre_hz_per_v : float or None
        Tuning slope at the bias giving the band centre [Hz/V], None when it is unreachable.
    """

    f_min_hz: float
    f_max_hz: float
    covers: bool
    bias_low_v: float | None
    bias_high_v: float | None
    centre_hz: float
    slope_at_centre_hz_per_v: float | None


def _band(f_low_hz: float, f_high_hz: float) -> tuple[float, float]:
    lo = _positive(f_low_hz, "f_low_hz", "Hz")
    hi = _positive(f_high_hz, "f_high_hz", "Hz")
    if not lo < hi:
        raise PhysicsInputError(f"band ({lo!r}, {hi!r}) Hz: need f_low_hz < f_high_hz")
    return lo, hi


def band_coverage(
    fit_or_params: Any,
    inductance_h: float,
    fixed_f: float,
    coupling_f: float | None,
    window_v: tuple[float, float],
    f_low_hz: float,
    f_high_hz: float,
) -> BandCoverage:
    """Frequency range a junction gives over a bias window, and whether it spans a band.

    Parameters
    ----------
    fit_or_params, inductance_h, fixed_f, coupling_f
        As in :func:`tank_frequency`.
    window_v : tuple of float, shape (2,)
        Bias window (v_low, v_high) [V].
    f_low_hz, f_high_hz : float
        Band to cover [Hz].

    Returns
    -------
    BandCoverage
    """
    lo, hi = _band(f_low_hz, f_high_hz)
    v1, v2 = _window(window_v)
    p = params_of(fit_or_params)
    f_min, f_max = tank_frequency(np.array([v1, v2]), p, inductance_h, fixed_f, coupling_f)
    centre = math.sqrt(lo * hi)
    args = (p, inductance_h, fixed_f, coupling_f)
    v_centre = bias_for_frequency(centre, *args, window_v=(v1, v2))
    slope = None if v_centre is None else float(tuning_slope(v_centre, *args))
    return BandCoverage(
        f_min_hz=float(f_min),
        f_max_hz=float(f_max),
        covers=bool(f_min <= lo and hi <= f_max),
        bias_low_v=bias_for_frequency(lo, *args, window_v=(v1, v2)),
        bias_high_v=bias_for_frequency(hi, *args, window_v=(v1, v2)),
        centre_hz=centre,
        slope_at_centre_hz_per_v=slope,
    )


@overload
def fixed_capacitance_to_centre(
    fit_or_params: Any,
    inductance_h: float,
    coupling_f: float | None,
    window_v: tuple[float, float],
    f_low_hz: float,
    f_high_hz: float,
    return_reason: Literal[False] = ...,
) -> float | None: ...
@overload
def fixed_capacitance_to_centre(
    fit_or_params: Any,
    inductance_h: float,
    coupling_f: float | None,
    window_v: tuple[float, float],
    f_low_hz: float,
    f_high_hz: float,
    return_reason: Literal[True],
) -> tuple[float | None, str]: ...
def fixed_capacitance_to_centre(
    fit_or_params: Any,
    inductance_h: float,
    coupling_f: float | None,
    window_v: tuple[float, float],
    f_low_hz: float,
    f_high_hz: float,
    return_reason: bool = False,
) -> float | None | tuple[float | None, str]:
    """Fixed parallel capacitance that centres a band in the tank's tuning range.

    With C_a, C_b the junction branch at the window's low and high bias and
    K = 1/((2π·f_c)²·L) the total capacitance for the band's geometric centre
    f_c = √(f_low·f_high), the geometric centre √(f_min·f_max) equals f_c when
    (C_fixed + C_a)(C_fixed + C_b) = K², i.e.

        C_fixed = [−(C_a + C_b) + √((C_a − C_b)² + 4K²)] / 2.

    The range then spans the band exactly when f_max/f_min = √((C_fixed + C_a)/(C_fixed + C_b))
    is at least f_high/f_low. Adding fixed capacitance only narrows that ratio.

    Parameters
    ----------
    fit_or_params, inductance_h, coupling_f
        As in :func:`tank_frequency`.
    window_v : tuple of float, shape (2,)
        Bias window (v_low, v_high) [V].
    f_low_hz, f_high_hz : float
        Band [Hz].
    return_reason : bool, optional
        Also return a sentence saying why there is no answer ("" when there is one).

    Returns
    -------
    float or None
        C_fixed [F] ≥ 0, or None when no non-negative fixed capacitance centres the band
        with the band inside the range: the part alone already tunes too low (it would need
        negative C), or its frequency ratio is narrower than the band's.
    """
    lo, hi = _band(f_low_hz, f_high_hz)
    v1, v2 = _window(window_v)
    big_l, _, cc = _tank_args(inductance_h, 0.0, coupling_f)
    c_a, c_b = tank_capacitance(np.array([v1, v2]), fit_or_params, 0.0, cc)
    f_c = math.sqrt(lo * hi)
    k = 1.0 / ((TWO_PI * f_c) ** 2 * big_l)
    band_ratio = hi / lo
    bare_ratio = math.sqrt(c_a / c_b)
    reason = ""
    value: float | None = None
    if bare_ratio < band_ratio:
        reason = (
            f"the band's frequency ratio {band_ratio:.4g} is wider than the {bare_ratio:.4g} "
            "this part gives over the window even with no fixed capacitance"
        )
    elif c_a * c_b > k * k:
        f_centre_bare = 1.0 / (TWO_PI * math.sqrt(big_l) * (c_a * c_b) ** 0.25)
        reason = (
            # Messages reach people: frequencies in MHz, as on the bench.
            f"with no fixed capacitance the range is centred at {f_centre_bare / 1e6:.6g} MHz, "
            f"below the band centre {f_c / 1e6:.6g} MHz; centring would need negative capacitance "
            "(use a smaller inductance)"
        )
    else:
        c_fixed = 0.5 * (-(c_a + c_b) + math.sqrt((c_a - c_b) ** 2 + 4.0 * k * k))
        c_fixed = max(c_fixed, 0.0)  # rounding when the bare range is already centred
        ratio = math.sqrt((c_fixed + c_a) / (c_fixed + c_b))
        if ratio < band_ratio:
            reason = (
                f"centring needs {c_fixed:.4g} F fixed, which narrows the frequency ratio to "
                f"{ratio:.4g}, less than the band's {band_ratio:.4g}"
            )
        else:
            value = c_fixed
    return (value, reason) if return_reason else value
