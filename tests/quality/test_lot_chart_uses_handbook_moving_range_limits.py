"""Lot medians are charted with x̄ ± 2.66·MR̄ from the earlier lots, widened only by sampling noise."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.quality.services.between import LotPoint, judge_lot, median_floor


def _lots(medians, sigma=1e-6, n=9):
    """Lots with given medians [pF-like units] and a within-lot σ (units all at the median)."""
    return [
        LotPoint(
            lot=i,
            medians={"c_low": m, "c_high": m / 3, "swing": 3.0},
            sigmas={"c_low": sigma, "c_high": sigma / 3, "swing": 1e-9},
            units={"c_low": np.full(n, m), "c_high": np.full(n, m / 3), "swing": np.full(n, 3.0)},
        )
        for i, m in enumerate(medians)
    ]


def test_limits_are_the_handbook_individuals_limits_of_the_earlier_lots():
    # NIST/SEMATECH e-Handbook §6.3.2: x̄ ± 2.66·MR̄ with MR̄ the mean moving range.
    # Earlier medians 10, 12, 11, 12.5: x̄ = 11.375, MR̄ = (2 + 1 + 1.5)/3 = 1.5 (by hand).
    points = _lots([10.0, 12.0, 11.0, 12.5, 11.8])
    chart = judge_lot(points, 4, tolerance=0.05)["chart"]["c_low"]
    assert_allclose(chart["center"], 11.375, rtol=1e-12)
    assert_allclose(chart["mr_bar"], 1.5, rtol=1e-12)
    # 2.66 is the tabled 3/d2 = 3·√π/2 = 2.6587; the library uses the exact constant.
    assert_allclose(chart["ucl"], 11.375 + 2.66 * 1.5, rtol=5e-4)
    assert_allclose(chart["lcl"], 11.375 - 2.66 * 1.5, rtol=5e-4)
    assert chart["hits"] == []


def test_a_lot_beyond_the_upper_limit_breaks_rule_1():
    points = _lots([10.0, 12.0, 11.0, 12.5, 16.0])  # UCL ≈ 15.36 (hand value above)
    hits = judge_lot(points, 4, tolerance=0.05)["chart"]["c_low"]["hits"]
    assert [h["rule"] for h in hits] == [1]


def test_no_chart_before_three_earlier_lots():
    points = _lots([10.0, 12.0, 11.0, 30.0])
    assert "c_low" not in judge_lot(points, 2, tolerance=0.05)["chart"]
    assert "c_low" in judge_lot(points, 3, tolerance=0.05)["chart"]


def test_lucky_close_early_lots_do_not_make_the_limits_narrower_than_a_median_can_be():
    # Three lots agreeing to 0.01 % while their units spread 1.5 %: MR̄/d2 is far below the
    # sampling error of a lot median, √(π/2)·σ/√n (asymptotic; from memory), so the floor rules.
    sigma_w, n = 0.015 * 88.0, 10
    points = _lots([88.00, 88.01, 88.005, 87.8], sigma=sigma_w, n=n)
    chart = judge_lot(points, 3, tolerance=0.05)["chart"]["c_low"]
    floor = math.sqrt(math.pi / 2) * sigma_w / math.sqrt(n)
    assert_allclose(median_floor([sigma_w] * 3, n), floor, rtol=1e-12)
    assert chart["sigma_mr"] < floor
    assert_allclose(chart["sigma"], floor, rtol=1e-12)
    assert_allclose(chart["ucl"], chart["center"] + 3 * floor, rtol=1e-12)
    # 0.2 pF below the centre is 0.5 σ of a median: in control.
    assert chart["hits"] == []


@pytest.mark.parametrize("drift", [0.45, 0.47])
def test_two_of_three_beyond_two_sigma_fires_rule_2(drift):
    # Western Electric rule 2 (WE Statistical Quality Control Handbook, 1956): the judged lot
    # and the one before both beyond 2σ on the same side, both under 3σ. Limits come from the
    # nine lots before the judged one, the drifted one included.
    seq = [10.0, 10.2, 9.9, 10.1, 10.0, 9.9, 10.1, 10.0, 10.0 + drift, 10.0 + drift]
    earlier = np.array(seq[:9])
    centre = earlier.mean()
    sigma = np.mean(np.abs(np.diff(earlier))) / (2 / math.sqrt(math.pi))  # MR̄/d2, d2 = 2/√π
    assert 2.0 < (seq[9] - centre) / sigma < 3.0  # the case is what it claims to be
    assert 2.0 < (seq[8] - centre) / sigma < 3.0
    chart = judge_lot(_lots(seq), 9, tolerance=0.05)["chart"]["c_low"]
    assert_allclose([chart["center"], chart["sigma"]], [centre, sigma], rtol=1e-12)
    assert [h["rule"] for h in chart["hits"]] == [2]


def test_a_lot_beyond_three_sigma_is_left_out_of_later_baselines():
    # Lot 5 jumps far above (rule 1); lot 6 is judged against lots 0–4 only.
    seq = [10.0, 10.2, 9.9, 10.1, 10.0, 14.0, 10.1]
    chart = judge_lot(_lots(seq), 6, tolerance=0.05)["chart"]["c_low"]
    assert_allclose(chart["center"], np.mean(seq[:5]), rtol=1e-12)
    assert (chart["baseline_lots"], chart["excluded_lots"], chart["hits"]) == (5, 1, [])
