"""Repeated rank tests of each new lot against a growing pool of earlier lots' units.

``stats.rank_shift`` (scipy's ``mannwhitneyu``) sorts the whole pool on every call; judging
200 lots in a row that way costs seconds. The pool here stays sorted between lots, and U
and the tie term come from binary searches. For the normal approximation (scipy's
"asymptotic" method, which ``method="auto"`` picks when both samples exceed 8 or there are
ties) the formulas are scipy's own (``_mannwhitneyu._get_mwu_z``: tie-corrected variance,
continuity correction, two-sided p = 2·Φ(−z) clipped to 1); small tie-free samples, where
scipy would use the exact distribution, go to ``rank_shift`` itself.
tests/quality/test_rank_pool_matches_scipy.py holds the two to 1e-12.
"""

from __future__ import annotations

import numpy as np
from scipy.special import ndtr

from labdb.stats import RankTest, rank_shift
from labdb.stats.compare import relative_shift

#: scipy's ``_mwu_choose_method``: exact when a sample has at most this many values and no ties.
EXACT_MAX = 8


def _sorted_median(x: np.ndarray) -> float:
    """np.median of an already sorted array, without the partition."""
    k = x.size // 2
    return float(x[k]) if x.size % 2 else float((x[k - 1] + x[k]) / 2.0)


class RankPool:
    """The values of one figure over earlier lots, ready for the next lot's rank test."""

    def __init__(self) -> None:
        self._sorted = np.zeros(0)
        self._pending: list[np.ndarray] = []
        self._ties = 0.0

    def add(self, values: np.ndarray) -> None:
        """Put a judged lot's values into the pool (sorted lazily, on the next test)."""
        self._pending.append(np.asarray(values, dtype=float))

    def _settle(self) -> np.ndarray:
        if self._pending:
            new = np.sort(np.concatenate(self._pending))
            self._ties += self._added_ties(new)
            # Insert into the sorted pool: O(m) per lot instead of a fresh sort.
            self._sorted = np.insert(self._sorted, np.searchsorted(self._sorted, new), new)
            self._pending = []
        return self._sorted

    def _added_ties(self, x: np.ndarray) -> float:
        """How Σ(t³ − t) of the pool grows when the sorted values ``x`` join it."""
        pool = self._sorted
        left = np.searchsorted(pool, x, side="left")
        right = np.searchsorted(pool, x, side="right")
        _, first, counts_new = np.unique(x, return_index=True, return_counts=True)
        counts_old = (right - left)[first].astype(float)
        pooled = counts_old + counts_new
        return float(np.sum(pooled**3 - pooled) - np.sum(counts_old**3 - counts_old))

    def size(self) -> int:
        return self._sorted.size + sum(p.size for p in self._pending)

    def test(self, new: np.ndarray) -> RankTest:
        """Two-sided Mann–Whitney test of ``new`` against the pool, as ``rank_shift`` gives it.

        Parameters
        ----------
        new : ndarray, shape (n1,)
            The new lot's values of the figure (unit of the figure).

        Returns
        -------
        RankTest
        """
        earlier = self._settle()
        x = np.sort(np.asarray(new, dtype=float))
        n1, n2 = x.size, earlier.size
        left = np.searchsorted(earlier, x, side="left")
        right = np.searchsorted(earlier, x, side="right")
        ties = self._ties + self._added_ties(x)
        if n1 <= EXACT_MAX or n2 <= EXACT_MAX:
            if ties == 0.0:
                return rank_shift(x, earlier)
        # U1 = #(new > earlier) + ½·#(new = earlier): R1 − n1(n1 + 1)/2 without ranking.
        u1 = float(np.sum(left) + 0.5 * np.sum(right - left))
        u = max(u1, n1 * n2 - u1)
        n = n1 + n2
        s = np.sqrt(n1 * n2 / 12 * ((n + 1) - ties / (n * (n - 1))))
        with np.errstate(divide="ignore", invalid="ignore"):
            z = (u - n1 * n2 / 2 - 0.5) / s
        p = float(np.clip(2.0 * ndtr(-z), 0.0, 1.0))
        if not np.isfinite(p):
            p = 1.0
        shift = relative_shift(_sorted_median(x), _sorted_median(earlier))
        return RankTest(statistic=u1, p_value=p, n_new=n1, n_earlier=n2, median_shift_rel=shift)
