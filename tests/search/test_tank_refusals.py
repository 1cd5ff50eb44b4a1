"""When no lot covers the band, the tank finder says why and, where it can, what fixed C would."""

import math

import numpy as np
import pytest

from labdb.physics import tank_frequency
from labdb.search.queries import TankQuery
from labdb.search.services import find_tanks

pytestmark = pytest.mark.django_db

PARAMS = (100e-12, 0.7, 0.5, 0.0)  # CJO [F], VJ [V], M, CP [F], chosen here
P = dict(zip(("cjo", "vj", "m", "cp"), PARAMS, strict=True))


def test_a_band_wider_than_any_part_can_tune_is_refused_with_the_ratios(stock):
    stock.lot(stock.part("RF-1"), "A", PARAMS, n_units=2)
    q = TankQuery(
        inductance_h=10e-6,
        fixed_f=0.0,
        f_low_hz=3e6,
        f_high_hz=12e6,
        bias_min_v=0.5,
        bias_max_v=10.0,
    )
    result = find_tanks(q)
    # Bare ratio √(C(0.5 V)/C(10 V)) = ((0.7 + 10)/(0.7 + 0.5))^(1/4) = 1.727 (by hand),
    # far below the band's 12/3 = 4.
    bare = ((0.7 + 10) / (0.7 + 0.5)) ** 0.25
    assert result.n_parts_covering == 0
    assert "not reachable by any fixed capacitance" in result.refusal
    assert (
        "4" in result.refusal and f"{bare:.4g}" in result.refusal and "RF-1 lot A" in result.refusal
    )
    assert result.suggestion is None


def test_a_band_reachable_with_another_fixed_capacitance_gets_a_centring_suggestion(stock):
    stock.lot(stock.part("RF-2"), "A", PARAMS, n_units=2)
    # 200 pF fixed drags the tank below the band and narrows its range.
    q = TankQuery(
        inductance_h=10e-6,
        fixed_f=200e-12,
        f_low_hz=5.6e6,
        f_high_hz=6.6e6,
        bias_min_v=0.5,
        bias_max_v=10.0,
    )
    result = find_tanks(q)
    assert result.n_parts_covering == 0 and "with a different fixed capacitance" in result.refusal
    s = result.suggestion
    assert s.part_number == "RF-2" and s.lot_code == "A" and s.fixed_f is not None
    fa, fb = tank_frequency(np.array([0.5, 10.0]), P, 10e-6, s.fixed_f)
    # Centred: the range's geometric centre is the band's, and the band lies inside it.
    assert math.sqrt(fa * fb) == pytest.approx(math.sqrt(5.6e6 * 6.6e6), rel=1e-9)
    assert fa <= 5.6e6 and fb >= 6.6e6
    again = find_tanks(TankQuery(**{**q.__dict__, "fixed_f": s.fixed_f}))
    assert again.n_parts_covering == 1 and not again.refusal


def test_a_covering_answer_also_suggests_the_centring_capacitance(stock):
    stock.lot(stock.part("RF-3"), "A", PARAMS, n_units=1)
    q = TankQuery(
        inductance_h=10e-6,
        fixed_f=20e-12,
        f_low_hz=5.5e6,
        f_high_hz=7.0e6,
        bias_min_v=0.5,
        bias_max_v=10.0,
    )
    s = find_tanks(q).suggestion
    fa, fb = tank_frequency(np.array([0.5, 10.0]), P, 10e-6, s.fixed_f)
    assert math.sqrt(fa * fb) == pytest.approx(math.sqrt(5.5e6 * 7.0e6), rel=1e-9)


def test_no_matching_lot_is_said_plainly(stock):
    stock.lot(stock.part("RF-4", kind="led"), "A", PARAMS, n_units=1)
    result = find_tanks(
        TankQuery(inductance_h=10e-6, f_low_hz=5e6, f_high_hz=6e6, bias_max_v=5.0, kind="varactor")
    )
    assert result.candidates == () and result.n_lots == 0
    assert "No lot summary matches" in result.refusal


def test_a_range_centred_too_low_for_any_fixed_capacitance_says_so(stock):
    stock.lot(stock.part("RF-5"), "A", PARAMS, n_units=1)
    # With no fixed C the range is 5.76–9.95 MHz (by hand), centred at 7.57 MHz; the band
    # 9–10 MHz needs a ratio of 1.11 (the part gives 1.73) but a centre above 7.57 MHz,
    # which only negative capacitance could give.
    q = TankQuery(
        inductance_h=10e-6,
        fixed_f=0.0,
        f_low_hz=9e6,
        f_high_hz=10e6,
        bias_min_v=0.5,
        bias_max_v=10.0,
    )
    result = find_tanks(q)
    assert result.n_parts_covering == 0
    assert "cannot be centred" in result.refusal and "negative capacitance" in result.refusal
    assert result.suggestion.fixed_f is None
