"""Western Electric run rules on hand-built sequences, and judging each point by earlier ones.

Rules as stated in the Western Electric *Statistical Quality Control Handbook* (1956):
1 one point beyond 3σ; 2 two of three consecutive beyond 2σ on one side; 3 four of five
consecutive beyond 1σ on one side; 4 eight consecutive on one side of the center line.
Sequences are in units of σ about the center line; each is also checked shifted and scaled.
"""

import numpy as np
import pytest

from labdb.stats import StatsInputError, evaluate_sequence, individuals_limits, western_electric

CASES = {
    # Triggers: the expected (index, rule) pairs, reported at the completing point.
    "rule 1 above": ([0.5, -0.2, 3.2, 0.1], {(2, 1)}),
    "rule 1 below": ([0.5, -3.5], {(1, 1)}),
    "rule 2 above": ([0.1, 2.5, 0.3, 2.4], {(3, 2)}),
    "rule 2 below": ([-0.1, -2.5, -2.2], {(2, 2)}),
    "rule 2 at its completing point only": ([0.1, 2.5, 2.4, 0.3], {(2, 2)}),
    "rule 3 above": ([0.0, 1.5, 1.2, 0.5, 1.8, 1.1], {(5, 3)}),
    "rule 3 below": ([0.0, -1.5, -1.2, -0.5, -1.8, -1.1], {(5, 3)}),
    "rule 4 above": ([0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8], {(7, 4)}),
    "rule 4 below": ([-0.8, -0.1, -0.2, -0.3, -0.4, -0.5, -0.6, -0.7], {(7, 4)}),
    "rule 4 again while the run goes on": ([0.2] * 9, {(7, 4), (8, 4)}),
    "rules 1 and 2 together": ([2.5, 3.2], {(1, 1), (1, 2)}),
    "rule 2 from the first two points": ([2.5, 2.4], {(1, 2)}),
    "rule 3 from the first four points": ([1.5, 1.2, 1.8, 1.1], {(3, 3)}),
    # Near misses: none of these may trigger anything.
    "2.9σ is inside": ([0.5, 2.9], set()),
    "exactly 3σ is not beyond": ([0.1, 3.0], set()),
    "2 beyond 2σ on opposite sides": ([0.1, 2.5, 0.3, -2.4], set()),
    "2 beyond 2σ but 4 apart": ([2.5, 0.1, 0.2, 2.4], set()),
    "4 beyond 1σ in 5 but one on the other side": ([0.0, 1.5, 1.2, -1.5, 1.8], set()),
    "3 of 5 beyond 1σ": ([0.0, 1.5, 0.2, 1.2, 0.5, 1.8], set()),
    "7 in a row": ([-0.1, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7], set()),
    "a point on the center line breaks the run": ([0.1, 0.2, 0.3, 0.0, 0.5, 0.6, 0.7, 0.8], set()),
    "an empty sequence": ([], set()),
}


@pytest.mark.parametrize("name", list(CASES))
def test_each_hand_built_sequence_triggers_exactly_its_rules(name):
    seq, expected = CASES[name]
    assert {(h.index, h.rule) for h in western_electric(seq, 0.0, 1.0)} == expected


# A point exactly on a limit does not survive the change of units bit for bit.
SCALABLE = [name for name in CASES if name != "exactly 3σ is not beyond"]


@pytest.mark.parametrize("name", SCALABLE)
def test_the_rules_depend_only_on_distance_in_sigmas(name):
    seq, expected = CASES[name]
    # Center 40 pF, σ 0.5 pF: the same sequence in farads.
    values = 40e-12 + 0.5e-12 * np.asarray(seq, dtype=float)
    hits = western_electric(values, 40e-12, 0.5e-12)
    assert {(h.index, h.rule) for h in hits} == expected


def test_hits_come_in_order_and_name_their_side():
    hits = western_electric([2.5, 3.2, 0.0, -3.3], 0.0, 1.0)
    assert [(h.index, h.rule) for h in hits] == [(1, 1), (1, 2), (3, 1)]
    assert "above" in hits[0].description and "3σ" in hits[0].description
    assert "below" in hits[2].description


def test_with_zero_sigma_any_point_off_center_is_beyond_the_limits():
    assert {(h.index, h.rule) for h in western_electric([4.0, 4.0, 4.1], 4.0, 0.0)} == {(2, 1)}


@pytest.mark.parametrize(
    ("values", "center", "sigma", "fragment"),
    [
        ([1.0, float("nan")], 0.0, 1.0, "values[1] is nan"),
        ([1.0], 0.0, -1.0, "sigma is -1.0"),
        ([1.0], float("inf"), 1.0, "center is inf"),
    ],
)
def test_bad_rule_input_is_refused(values, center, sigma, fragment):
    with pytest.raises(StatsInputError) as err:
        western_electric(values, center, sigma)
    assert fragment in str(err.value)


def test_each_point_is_judged_against_the_points_before_it():
    # Hand-worked: i = 3 uses [10, 12, 11] (x̄ 11, MR̄ 1.5, σ 1.329): 14 is 2.26σ out, alone.
    # i = 4 uses [10, 12, 11, 14] (x̄ 11.75, MR̄ 2): 13 is inside. i = 5 uses the first five
    # (x̄ 12, MR̄ 1.75, UCL 16.65): 20 is beyond 3σ.
    values = [10, 12, 11, 14, 13, 20]
    verdicts = evaluate_sequence(values)
    assert [v.index for v in verdicts] == [3, 4, 5]
    assert [v.limits.center for v in verdicts] == [11.0, 11.75, 12.0]
    assert [v.limits.mr_bar for v in verdicts] == [1.5, 2.0, 1.75]
    assert [[h.rule for h in v.hits] for v in verdicts] == [[], [], [1]]
    assert all(v.limits == individuals_limits(values[: v.index]) for v in verdicts)
    assert [v.value for v in verdicts] == [14.0, 13.0, 20.0]


def test_the_judged_point_does_not_move_its_own_limits():
    a = evaluate_sequence([10, 12, 11, 14, 13, 20])
    b = evaluate_sequence([10, 12, 11, 14, 13, -500])
    assert a[-1].limits == b[-1].limits


def test_earlier_points_count_toward_a_pattern_under_the_new_limits():
    # Hand-worked: at i = 7 the limits come from [0, 1, 0, 1, 0, 1, 5]: x̄ = 8/7, MR̄ = 9/6,
    # σ = 1.329. The new 5 is 2.90σ out (no rule 1), but with the earlier 5 it makes
    # 2 of 3 beyond 2σ (rule 2). At i = 6 the first 5 was beyond 3σ of x̄ 0.5, σ 0.886.
    verdicts = evaluate_sequence([0, 1, 0, 1, 0, 1, 5, 5])
    assert [(v.index, [h.rule for h in v.hits]) for v in verdicts][-2:] == [(6, [1]), (7, [2])]


def test_min_baseline_sets_the_first_judged_point():
    assert [v.index for v in evaluate_sequence(range(8), min_baseline=5)] == [5, 6, 7]
    assert evaluate_sequence([1.0, 2.0, 3.0]) == []
    assert evaluate_sequence([]) == []


@pytest.mark.parametrize("min_baseline", [2, 0, 3.0, True])
def test_a_baseline_below_three_points_or_not_an_integer_is_refused(min_baseline):
    with pytest.raises(StatsInputError, match="min_baseline"):
        evaluate_sequence([1.0, 2.0, 3.0, 4.0], min_baseline=min_baseline)
