"""Cpk on hand-worked examples with Montgomery's definition."""

import math
import statistics

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.stats import StatsInputError, cpk


def test_a_centred_process_on_a_hand_worked_example():
    # Montgomery, Introduction to Statistical Quality Control: Cpk = min(USL − μ, μ − LSL)/(3σ).
    # Hand-worked: 10.1, 10.2, 10.3 -> mean 10.2, s = √((0.01 + 0 + 0.01)/2) = 0.1;
    # LSL 9.8, USL 10.6 -> Cpu = Cpl = 0.4/0.3 = 1.333.
    res = cpk([10.1, 10.2, 10.3], lsl=9.8, usl=10.6)
    assert_allclose([res.mean, res.sigma], [10.2, 0.1], rtol=1e-12)
    assert_allclose([res.cpk, res.cpu, res.cpl], [4 / 3, 4 / 3, 4 / 3], rtol=1e-12)
    assert res.n == 3


def test_an_off_centre_process_takes_the_nearer_limit():
    # Hand-worked: mean 10.3, s 0.1 -> Cpu = 0.3/0.3 = 1.0, Cpl = 0.5/0.3 = 1.667, Cpk = 1.0.
    res = cpk([10.2, 10.3, 10.4], lsl=9.8, usl=10.6)
    assert_allclose([res.cpu, res.cpl, res.cpk], [1.0, 5 / 3, 1.0], rtol=1e-12)


def test_cpk_is_cp_less_the_off_centre_penalty():
    # Montgomery: Cpk = Cp − |μ − m|/(3σ) with Cp = (USL − LSL)/(6σ), m the mid-spec.
    rng = np.random.default_rng(3)
    x = rng.normal(47e-12, 1.3e-12, size=25)
    lsl, usl = 42e-12, 54e-12
    res = cpk(x, lsl=lsl, usl=usl)
    s = statistics.stdev(x.tolist())
    mid = (lsl + usl) / 2
    assert_allclose(res.cpk, (usl - lsl) / (6 * s) - abs(res.mean - mid) / (3 * s), rtol=1e-10)


def test_sigma_is_the_sample_standard_deviation():
    rng = np.random.default_rng(8)
    x = rng.normal(size=6)
    res = cpk(x, usl=5.0)
    # ddof = 1, checked against the standard library, and visibly not the population sd.
    assert_allclose(res.sigma, statistics.stdev(x.tolist()), rtol=1e-12)
    assert not math.isclose(res.sigma, statistics.pstdev(x.tolist()), rel_tol=1e-3)


def test_one_limit_gives_a_one_sided_index():
    upper = cpk([10.1, 10.2, 10.3], usl=10.6)
    assert upper.cpl is None
    assert_allclose([upper.cpk, upper.cpu], [4 / 3, 4 / 3], rtol=1e-12)
    lower = cpk([10.1, 10.2, 10.3], lsl=10.05)
    assert lower.cpu is None
    assert_allclose(lower.cpk, 0.15 / 0.3, rtol=1e-12)


def test_a_mean_outside_the_limits_gives_a_negative_index():
    res = cpk([10.1, 10.2, 10.3], lsl=9.0, usl=10.0)
    assert_allclose(res.cpk, -0.2 / 0.3, rtol=1e-12)


def test_identical_values_are_infinitely_capable_inside_the_limits():
    assert cpk([5.0, 5.0, 5.0], lsl=4.0, usl=6.0).cpk == math.inf
    assert cpk([5.0, 5.0], usl=5.0).cpk == 0.0
    assert cpk([5.0, 5.0], lsl=6.0).cpk == -math.inf


@pytest.mark.parametrize(
    ("values", "kwargs", "fragment"),
    [
        ([1.0], {"usl": 2.0}, "at least 2"),
        ([], {"usl": 2.0}, "at least 2"),
        ([1.0, 2.0], {}, "spec limit"),
        ([1.0, 2.0], {"lsl": 3.0, "usl": 3.0}, "not below usl"),
        ([1.0, float("nan")], {"usl": 3.0}, "values[1] is nan"),
        ([1.0, 2.0], {"usl": float("nan")}, "usl is nan"),
    ],
)
def test_bad_capability_input_is_refused(values, kwargs, fragment):
    with pytest.raises(StatsInputError) as err:
        cpk(values, **kwargs)
    assert fragment in str(err.value)
    # Our own type, still a ValueError for callers that only know the standard library.
    assert isinstance(err.value, ValueError)
