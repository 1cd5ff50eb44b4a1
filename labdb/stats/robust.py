"""Robust statistics within a lot: median/MAD spread, modified z-scores, curve bands."""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy.special import ndtri

from labdb.stats.errors import StatsInputError, finite_1d, finite_scalar

#: Φ⁻¹(0.75) = 0.674490: the MAD of a normal sample is this many standard deviations.
#: Iglewicz & Hoaglin (1993) and the NIST/SEMATECH e-Handbook §1.3.5.17 print it as 0.6745.
MAD_QUANTILE = float(ndtri(0.75))

#: σ = MAD / Φ⁻¹(0.75) ≈ 1.4826·MAD, the same factor as
#: ``scipy.stats.median_abs_deviation(scale="normal")``.
MAD_TO_SIGMA = 1.0 / MAD_QUANTILE

#: √(π/2) ≈ 1.253314: for a normal sample σ = √(π/2)·E|x − μ|, used when MAD = 0.
MEANAD_TO_SIGMA = float(np.sqrt(np.pi / 2.0))

#: Iglewicz & Hoaglin's cut-off: |modified z| above this marks a potential outlier.
DEFAULT_OUTLIER_THRESHOLD = 3.5


def robust_center_spread(x: Any) -> tuple[float, float]:
    """Median and MAD-based standard deviation of a sample.

    Parameters
    ----------
    x : array_like, shape (n,), n ≥ 1
        Finite values in any unit (e.g. capacitance [F]).

    Returns
    -------
    median : float
        Sample median, unit of ``x``.
    sigma_mad : float
        1.4826·MAD (exactly MAD/Φ⁻¹(0.75)), unit of ``x``; 0 when more than half the values
        are equal.

    Raises
    ------
    StatsInputError
        Empty ``x`` or a NaN/inf value (the message gives its index).
    """
    arr = finite_1d(x, "x")
    med = float(np.median(arr))
    mad = float(np.median(np.abs(arr - med)))
    return med, MAD_TO_SIGMA * mad


def modified_zscores(x: Any) -> np.ndarray:
    """Modified z-scores Mᵢ = 0.6745·(xᵢ − median)/MAD (Iglewicz & Hoaglin, 1993).

    When MAD = 0 (more than half the values identical, common with quantized readings) the
    formula divides by zero. We then estimate σ from the mean absolute deviation about the
    median instead, Mᵢ = (xᵢ − median)/(1.253314·MeanAD), the fallback IBM documents for its
    modified z-score (from memory); 1.253314 = √(π/2) makes both forms estimate σ for normal
    data. When MeanAD is also 0 (all values equal) nothing stands out and every score is 0.

    Parameters
    ----------
    x : array_like, shape (n,), n ≥ 1
        Finite values in any unit.

    Returns
    -------
    ndarray, shape (n,)
        Modified z-scores [dimensionless]. The factor used is Φ⁻¹(0.75) = 0.674490 exactly
        (the literature rounds it to 0.6745).

    Raises
    ------
    StatsInputError
        Empty ``x`` or a NaN/inf value (the message gives its index).
    """
    arr = finite_1d(x, "x")
    dev = arr - np.median(arr)
    abs_dev = np.abs(dev)
    mad = float(np.median(abs_dev))
    if mad > 0.0:
        return MAD_QUANTILE * dev / mad
    mean_ad = float(np.mean(abs_dev))
    if mean_ad > 0.0:
        return dev / (MEANAD_TO_SIGMA * mean_ad)
    return np.zeros_like(arr)


def outliers(x: Any, threshold: float = DEFAULT_OUTLIER_THRESHOLD) -> np.ndarray:
    """Which values are potential outliers: |modified z-score| > ``threshold``.

    Parameters
    ----------
    x : array_like, shape (n,), n ≥ 1
        Finite values in any unit.
    threshold : float, optional
        Cut-off on |Mᵢ| [dimensionless], > 0; 3.5 as Iglewicz & Hoaglin recommend.

    Returns
    -------
    ndarray of bool, shape (n,)
        True where |Mᵢ| is strictly above ``threshold``. See :func:`modified_zscores` for MAD = 0.
    """
    limit = finite_scalar(threshold, "threshold")
    if limit <= 0.0:
        raise StatsInputError(f"threshold is {limit}; it must be > 0")
    return np.abs(modified_zscores(x)) > limit


def curve_distance(c_curve: Any, c_reference: Any) -> float | np.ndarray:
    """RMS of ln(c/c_ref) between C–V curves sampled on a common bias grid.

    A relative measure (0.01 ≈ 1 % apart), fair across the decades a C–V curve spans. Grid
    points where either curve is NaN (outside a unit's measured range) are left out.

    Parameters
    ----------
    c_curve : array_like, shape (n,) or (m, n)
        Capacitance of one curve, or of ``m`` curves, at the ``n`` grid biases [F]; > 0 or NaN.
    c_reference : array_like, shape (n,)
        Reference capacitance (e.g. the lot's median curve) at the same biases [F]; > 0 or NaN.

    Returns
    -------
    float, or ndarray of shape (m,)
        RMS log ratio [dimensionless], one per curve.

    Raises
    ------
    StatsInputError
        Shapes that do not match, a value ≤ 0 or infinite, or a curve sharing no grid point
        with the reference.
    """
    curves = _float_array(c_curve, "c_curve")
    ref = _float_array(c_reference, "c_reference")
    if ref.ndim != 1 or curves.ndim not in (1, 2) or curves.shape[-1] != ref.shape[0]:
        raise StatsInputError(
            f"c_curve has shape {curves.shape} and c_reference {ref.shape}; expected (n,) or "
            "(m, n) against (n,) on the same bias grid",
        )
    _check_positive_or_nan(curves, "c_curve")
    _check_positive_or_nan(ref, "c_reference")
    rows = np.atleast_2d(curves)
    both = np.isfinite(rows) & np.isfinite(ref)
    counts = both.sum(axis=1)
    empty = np.flatnonzero(counts == 0)
    if empty.size:
        where = "c_curve" if curves.ndim == 1 else f"c_curve[{int(empty[0])}]"
        raise StatsInputError(f"{where} shares no grid point with c_reference (all NaN)")
    log_ratio = np.where(both, np.log(np.where(both, rows / ref, 1.0)), 0.0)
    rms = np.sqrt(np.sum(log_ratio**2, axis=1) / counts)
    return float(rms[0]) if curves.ndim == 1 else rms


def pointwise_band(
    curves: Any, lower: float = 10.0, upper: float = 90.0
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Percentile band and median of a set of curves, grid point by grid point.

    Percentiles interpolate linearly between order statistics (numpy's default, Hyndman & Fan
    type 7). NaN entries (a curve not measured at that bias) are ignored; a grid point where
    every curve is NaN gives NaN.

    Parameters
    ----------
    curves : array_like, shape (m, n)
        ``m`` curves on a common grid of ``n`` points, any unit (e.g. [F]); finite or NaN.
    lower, upper : float, optional
        Percentiles of the band [%], 0 ≤ lower ≤ upper ≤ 100.

    Returns
    -------
    p_low, median, p_high : ndarray, shape (n,)
        Lower percentile, median and upper percentile at each grid point, unit of ``curves``.
    """
    lo = finite_scalar(lower, "lower")
    hi = finite_scalar(upper, "upper")
    if not 0.0 <= lo <= hi <= 100.0:
        raise StatsInputError(f"lower={lo}, upper={hi}; need 0 ≤ lower ≤ upper ≤ 100 (percent)")
    arr = _float_array(curves, "curves")
    if arr.ndim != 2 or arr.shape[0] == 0:
        raise StatsInputError(f"curves: expected shape (m, n) with m ≥ 1, got {arr.shape}")
    inf = np.argwhere(np.isinf(arr))
    if inf.size:
        i, j = (int(k) for k in inf[0])
        raise StatsInputError(f"curves[{i}, {j}] is {arr[i, j]}; use NaN for a missing point")
    out = np.full((3, arr.shape[1]), np.nan)
    has_data = ~np.all(np.isnan(arr), axis=0)
    # Only columns with data go to nanpercentile, so no "All-NaN slice" warning is raised.
    if has_data.any():
        out[:, has_data] = np.nanpercentile(arr[:, has_data], [lo, 50.0, hi], axis=0)
    return out[0], out[1], out[2]


def _float_array(values: Any, name: str) -> np.ndarray:
    """``values`` as a float array, or StatsInputError naming ``name``."""
    try:
        return np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise StatsInputError(f"{name}: expected an array of numbers ({exc})") from None


def _check_positive_or_nan(arr: np.ndarray, name: str) -> None:
    """Raise StatsInputError at the first entry of ``arr`` that is neither > 0 nor NaN."""
    bad = np.argwhere(~(np.isnan(arr) | (np.isfinite(arr) & (arr > 0.0))))
    if bad.size:
        idx = tuple(int(k) for k in bad[0])
        where = ", ".join(str(k) for k in idx)
        raise StatsInputError(
            f"{name}[{where}] is {arr[idx]}; capacitance must be > 0 (NaN marks a missing point)",
        )
