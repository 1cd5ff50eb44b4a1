"""Fitted curves of many units at once, and the per-sweep shape checks (rise beyond noise)."""

from __future__ import annotations

import numpy as np

from labdb.physics import junction_capacitance_many

#: A rise of C with reverse bias counts as non-monotonic when it exceeds this many standard
#: deviations of the difference of two readings (√2·σ): at 5σ a Gaussian step exceeds it
#: with P ≈ 3e-7, so 5000 sweeps of 40 steps raise about 0.06 false flags in all.
RISE_NOISE_FACTOR = 5.0

#: ... and this relative floor [1], so near noise-free sweeps are not judged on rounding.
RISE_FLOOR = 0.002

#: σ = 1.4826·median|r| estimates Gaussian noise from residuals while ignoring a few glitches
#: (the MAD-to-σ factor 1/Φ⁻¹(0.75), as in scipy.stats.median_abs_deviation(scale="normal")).
_MAD_SIGMA = 1.482602218505602


def rise_checks(
    bias_v: list[np.ndarray], capacitance_f: list[np.ndarray], params: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Largest relative rise of C with reverse bias, and the sweep's own reading noise.

    A junction's capacitance falls as reverse bias grows; a step where it rises by more
    than the reading noise points to a bad contact, a range switch or leakage.

    Parameters
    ----------
    bias_v, capacitance_f : list of b ndarrays, shapes (n_i,)
        Each sweep's reverse bias [V] and measured capacitance [F].
    params : ndarray, shape (b, 4)
        Each sweep's current fit: CJO [F], VJ [V], M [1], CP [F].

    Returns
    -------
    max_rise : ndarray, shape (b,)
        max over consecutive points (sorted by bias) of C[i+1]/C[i] − 1 [1]; negative when
        every step falls; NaN for a sweep of one point.
    noise : ndarray, shape (b,)
        1.4826·median|C/C_fit − 1| [1], the robust relative reading noise.
    """
    b = len(bias_v)
    n = max((len(v) for v in bias_v), default=0)
    v = np.full((b, n), np.nan)
    c = np.full((b, n), np.nan)
    for i, (vi, ci) in enumerate(zip(bias_v, capacitance_f, strict=True)):
        order = np.argsort(vi, kind="stable")
        v[i, : len(vi)] = np.asarray(vi, dtype=float)[order]
        c[i, : len(ci)] = np.asarray(ci, dtype=float)[order]
    with np.errstate(invalid="ignore", divide="ignore"):
        steps = c[:, 1:] / c[:, :-1] - 1.0
        has_step = np.isfinite(steps).any(axis=1)
        max_rise = np.full(b, np.nan)
        max_rise[has_step] = np.nanmax(steps[has_step], axis=1)
        fitted = junction_capacitance_many(np.nan_to_num(v), *params.T)
        resid = np.where(np.isnan(c), np.nan, c / fitted - 1.0)
    noise = _MAD_SIGMA * np.nanmedian(np.abs(resid), axis=1) if b else np.zeros(0)
    return max_rise, noise


def rise_limit(noise: float) -> float:
    """Largest rise [1] still read as noise for a sweep with relative noise ``noise`` [1]."""
    return max(RISE_NOISE_FACTOR * np.sqrt(2.0) * float(noise), RISE_FLOOR)
