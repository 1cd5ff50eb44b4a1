"""The incremental rank test gives scipy.stats.mannwhitneyu's U and p, and rank_shift's shift."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.stats import mannwhitneyu

from labdb.quality.services.ranktest import RankPool
from labdb.stats import rank_shift


@pytest.mark.parametrize(
    ("sizes", "decimals"),
    [
        ([25] * 12, None),  # continuous values: no ties, normal approximation
        ([9, 10, 8, 12], 2),  # rounded readings: many ties, tie-corrected variance
        ([5, 6, 4], None),  # small lots without ties: scipy's exact distribution
        ([3, 40, 2], 1),  # small with ties: scipy falls back to the approximation
    ],
)
def test_each_lot_against_the_pool_of_earlier_lots(sizes, decimals):
    rng = np.random.default_rng(sum(sizes))
    lots = [rng.normal(10.0 + 0.1 * k, 1.0, n) for k, n in enumerate(sizes)]
    if decimals is not None:
        lots = [np.round(v, decimals) for v in lots]
    pool = RankPool()
    pool.add(lots[0])
    for k in range(1, len(lots)):
        earlier = np.concatenate(lots[:k])
        got = pool.test(lots[k])
        ref = mannwhitneyu(lots[k], earlier, alternative="two-sided", method="auto")
        assert_allclose(got.statistic, ref.statistic, rtol=1e-12)
        assert_allclose(got.p_value, ref.pvalue, rtol=1e-10, atol=1e-300)
        assert_allclose(
            got.median_shift_rel, rank_shift(lots[k], earlier).median_shift_rel, rtol=1e-12
        )
        assert (got.n_new, got.n_earlier) == (lots[k].size, earlier.size)
        pool.add(lots[k])


def test_a_lot_identical_to_its_pool_has_no_evidence_of_a_shift():
    pool = RankPool()
    pool.add(np.full(10, 3.0))
    got = pool.test(np.full(10, 3.0))
    assert got.p_value == 1.0 and got.median_shift_rel == 0.0
