"""Between-lot comparison: rank test of a new lot against earlier lots, with Holm correction."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.stats import mannwhitneyu

from labdb.stats.errors import StatsInputError, finite_1d, finite_scalar


@dataclass(frozen=True)
class RankTest:
    """Outcome of a two-sided Mann–Whitney rank test of a new lot against earlier lots.

    Attributes
    ----------
    statistic : float
        Mann–Whitney U of the new sample [dimensionless]: the number of (new, earlier) pairs
        with new > earlier, ties counting one half.
    p_value : float
        Two-sided p-value [dimensionless], 0..1.
    n_new, n_earlier : int
        Sample sizes.
    median_shift_rel : float
        (median(new) − median(earlier))/|median(earlier)| [dimensionless]; ±inf when the
        earlier median is 0 and the new one is not, 0 when both are 0.
    """

    statistic: float
    p_value: float
    n_new: int
    n_earlier: int
    median_shift_rel: float


def rank_shift(new: Any, earlier: Any) -> RankTest:
    """Compare a figure of a new lot's units with the same figure of earlier lots' units.

    Uses ``scipy.stats.mannwhitneyu`` (two-sided, ``method="auto"``: exact null distribution
    for small samples without ties, else the normal approximation with tie and continuity
    corrections), plus the relative shift of the medians so that a significant but
    negligible shift can be told apart from a real one.

    Parameters
    ----------
    new : array_like, shape (n_new,), n_new ≥ 1
        Figure values of the new lot's units, any unit (e.g. [F]); finite.
    earlier : array_like, shape (n_earlier,), n_earlier ≥ 1
        The same figure for units of earlier lots, same unit; finite.

    Returns
    -------
    RankTest
    """
    a = finite_1d(new, "new")
    b = finite_1d(earlier, "earlier")
    res = mannwhitneyu(a, b, alternative="two-sided", method="auto")
    p = float(res.pvalue)
    # With every value tied the variance of U is 0; there is then no evidence of a shift.
    if not np.isfinite(p):
        p = 1.0
    shift = relative_shift(float(np.median(a)), float(np.median(b)))
    return RankTest(
        statistic=float(res.statistic),
        p_value=p,
        n_new=int(a.size),
        n_earlier=int(b.size),
        median_shift_rel=shift,
    )


def relative_shift(med_new: float, med_old: float) -> float:
    """(med_new − med_old)/|med_old| [dimensionless]; ±inf when only med_old is 0, 0 when both are."""
    if med_old != 0.0:
        return (med_new - med_old) / abs(med_old)
    if med_new == 0.0:
        return 0.0
    return float(np.copysign(np.inf, med_new))


def holm(p_values: Any) -> np.ndarray:
    """Holm's step-down adjustment of p-values for multiple tests (Holm, 1979).

    With the m p-values sorted, p₍₁₎ ≤ … ≤ p₍ₘ₎, the adjusted value of p₍ᵢ₎ is
    max over j ≤ i of min(1, (m − j + 1)·p₍ⱼ₎): monotone in the order of the raw p-values and
    capped at 1. Rejecting where the adjusted value is < α controls the family-wise error rate
    at α.

    Parameters
    ----------
    p_values : array_like, shape (m,)
        Raw p-values [dimensionless], each in 0..1.

    Returns
    -------
    ndarray, shape (m,)
        Adjusted p-values in the input order [dimensionless].
    """
    p = finite_1d(p_values, "p_values", min_size=0)
    bad = np.flatnonzero((p < 0.0) | (p > 1.0))
    if bad.size:
        i = int(bad[0])
        raise StatsInputError(f"p_values[{i}] is {p[i]}; a p-value must lie in 0..1")
    m = p.size
    order = np.argsort(p, kind="stable")
    scaled = (m - np.arange(m)) * p[order]
    adjusted_sorted = np.minimum(np.maximum.accumulate(scaled), 1.0)
    adjusted = np.empty(m)
    adjusted[order] = adjusted_sorted
    return adjusted


def shifted_figures(
    tests: Mapping[str, RankTest], alpha: float = 0.05, tolerance: float = 0.05
) -> dict[str, bool]:
    """Which figures of a new lot moved: significant after Holm AND larger than a tolerance.

    Parameters
    ----------
    tests : mapping of str to RankTest
        One rank test per figure name (e.g. ``"c_at_1v"``, ``"swing"``); the Holm family is
        this whole mapping.
    alpha : float, optional
        Family-wise significance level [dimensionless], 0 < alpha < 1.
    tolerance : float, optional
        Smallest relative median shift worth flagging [dimensionless], ≥ 0 (0.05 = 5 %).

    Returns
    -------
    dict of str to bool
        For each figure, True when its Holm-adjusted p < ``alpha`` and
        |median_shift_rel| > ``tolerance``.
    """
    a = finite_scalar(alpha, "alpha")
    tol = finite_scalar(tolerance, "tolerance")
    if not 0.0 < a < 1.0:
        raise StatsInputError(f"alpha is {a}; it must lie strictly between 0 and 1")
    if tol < 0.0:
        raise StatsInputError(f"tolerance is {tol}; it must be ≥ 0")
    names = list(tests)
    for name in names:
        if not isinstance(tests[name], RankTest):
            raise StatsInputError(f"tests[{name!r}]: expected a RankTest, got {tests[name]!r}")
    adjusted = holm([tests[name].p_value for name in names])
    return {
        name: bool(adj < a and abs(tests[name].median_shift_rel) > tol)
        for name, adj in zip(names, adjusted, strict=True)
    }
