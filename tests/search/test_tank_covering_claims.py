"""The tank finder's covering claims hold when the tank frequency is evaluated directly."""

import math

import numpy as np
import pytest

from labdb.physics import tank_frequency
from labdb.search.queries import TankQuery
from labdb.search.services import find_tanks

pytestmark = pytest.mark.django_db

GOOD = (100e-12, 0.7, 0.5, 0.0)  # CJO [F], VJ [V], M, CP [F], chosen here
WEAK = (60e-12, 0.7, 0.5, 0.0)  # a unit with less capacitance tunes higher at low bias
TANK = dict(
    inductance_h=10e-6,
    fixed_f=20e-12,
    f_low_hz=5.5e6,
    f_high_hz=7.0e6,
    bias_min_v=0.5,
    bias_max_v=10.0,
)


def params(p):
    return dict(zip(("cjo", "vj", "m", "cp"), p, strict=True))


def test_a_covering_lot_reaches_both_band_edges_at_the_reported_biases(stock):
    part = stock.part("TK-1")
    stock.lot(part, "A", GOOD, n_units=3)
    result = find_tanks(TankQuery(**TANK))
    lot = result.candidates[0].lots[0]
    cov = lot.coverage
    assert cov.covers and result.n_parts_covering == 1 and not result.refusal
    args = (params(GOOD), 10e-6, 20e-12)
    # Thomson's formula via labdb.physics.tank_frequency at the reported biases.
    assert tank_frequency(cov.bias_low_v, *args) == pytest.approx(5.5e6, rel=1e-9)
    assert tank_frequency(cov.bias_high_v, *args) == pytest.approx(7.0e6, rel=1e-9)
    f_ends = tank_frequency(np.array([0.5, 10.0]), *args)
    assert f_ends[0] <= 5.5e6 and f_ends[1] >= 7.0e6
    assert (cov.f_min_hz, cov.f_max_hz) == pytest.approx(tuple(f_ends), rel=1e-12)
    # By hand: C(0.5 V) = 100 pF/√(1 + 0.5/0.7) = 76.376 pF, so with 20 pF fixed
    # f = 1/(2π√(10 µH · 96.376 pF)) = 5.1267 MHz.
    assert cov.f_min_hz == pytest.approx(5.1267e6, rel=2e-5)
    # The database margin is the same frequency ratio the physics gives.
    assert lot.margin == pytest.approx(min(5.5e6 / f_ends[0], f_ends[1] / 7.0e6), rel=1e-12)


def test_a_weak_unit_is_named_and_lowers_the_fraction_that_covers(stock):
    part = stock.part("TK-2")
    stock.lot(part, "A", None, units=[GOOD, GOOD, GOOD, GOOD, WEAK])
    result = find_tanks(TankQuery(**TANK))
    cand = result.candidates[0]
    lot = cand.lots[0]
    assert lot.coverage.covers  # the median unit has the GOOD parameters
    assert (lot.n_covering, lot.n_units) == (4, 5)
    assert lot.worst == "unit U05"
    fa, fb = tank_frequency(np.array([0.5, 10.0]), params(WEAK), 10e-6, 20e-12)
    assert fa > 5.5e6  # the weak unit starts above the band: it does not cover
    assert lot.worst_f_hz == pytest.approx((fa, fb), rel=1e-12)
    assert cand.worst_unit is lot and (cand.n_units_covering, cand.n_units) == (4, 5)


def test_slope_at_band_centre_is_the_derivative_of_the_tank_frequency(stock):
    part = stock.part("TK-3")
    stock.lot(part, "A", GOOD, n_units=1)
    cov = find_tanks(TankQuery(**TANK)).candidates[0].lots[0].coverage
    args = (params(GOOD), 10e-6, 20e-12)
    centre = math.sqrt(5.5e6 * 7.0e6)
    from labdb.physics import bias_for_frequency

    v = bias_for_frequency(centre, *args, window_v=(0.5, 10.0))
    h = 1e-4  # central difference, error O(h²)
    numeric = (tank_frequency(v + h, *args) - tank_frequency(v - h, *args)) / (2 * h)
    assert cov.slope_at_centre_hz_per_v == pytest.approx(float(numeric), rel=1e-6)


def test_parts_are_ranked_by_their_worst_lot(stock, day):
    steady = stock.part("TK-STEADY")
    stock.lot(steady, "A", GOOD, n_units=1, received=day(1))
    stock.lot(steady, "B", GOOD, n_units=1, received=day(2))
    spread = stock.part("TK-SPREAD")
    stock.lot(spread, "A", (130e-12, 0.7, 0.5, 0.0), n_units=1, received=day(1))
    stock.lot(spread, "B", (85e-12, 0.7, 0.5, 0.0), n_units=1, received=day(2))
    result = find_tanks(TankQuery(**TANK))
    names = [c.part_number for c in result.candidates]
    assert names == ["TK-STEADY", "TK-SPREAD"]
    spread_hit = result.candidates[1]
    # Lot A's 130 pF tunes too low at 10 V (6.90 MHz by hand); it is listed first, as worst.
    assert spread_hit.lots[0].code == "A"
    assert not spread_hit.lots[0].coverage.covers and spread_hit.n_lots_covering == 1


def test_one_covering_lot_is_enough_to_answer_without_refusal(stock, day):
    part = stock.part("TK-MIXED")
    stock.lot(part, "A", (130e-12, 0.7, 0.5, 0.0), n_units=1, received=day(1))  # tunes too low
    stock.lot(part, "B", GOOD, n_units=1, received=day(2))
    result = find_tanks(TankQuery(**TANK))
    assert result.n_parts_covering == 0  # not with every lot
    assert not result.refusal and result.candidates[0].n_lots_covering == 1
