"""A part is found exactly when its hand-computed swing reaches the minimum asked for."""

import math

import pytest

from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

pytestmark = pytest.mark.django_db

# Generating parameters (chosen here): CJO = 50 pF, VJ = 0.7 V, M = 0.5, CP = 0.
CJO, VJ, M = 50e-12, 0.7, 0.5


def hand_swing(v1, v2, cjo=CJO, vj=VJ, m=M, cp=0.0):
    # C(V) = CJO·(1 + V/VJ)^(−M) + CP, the SPICE depletion formula (DESIGN.md § Physics).
    c1 = cjo * (1 + v1 / vj) ** (-m) + cp
    c2 = cjo * (1 + v2 / vj) ** (-m) + cp
    return c1 / c2


def numbers(page):
    return [h.part_number for h in page.hits]


def test_the_hand_computed_swing_is_what_the_search_reports(stock):
    part = stock.part("SW-1", window=(1.0, 9.0))
    stock.lot(part, "A", (CJO, VJ, M, 0.0))
    # With CP = 0 the swing is ((VJ + V2)/(VJ + V1))^M = (9.7/1.7)^0.5 (worked by hand).
    expected = math.sqrt(9.7 / 1.7)
    assert hand_swing(1.0, 9.0) == pytest.approx(expected, rel=1e-14)
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0)).hits[0]
    assert hit.swing_worst == pytest.approx(expected, rel=1e-12)
    assert hit.swing_median == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("cp", [0.0, 3e-12])
def test_a_part_is_found_just_below_its_swing_and_left_out_just_above(stock, cp):
    part = stock.part("SW-2")
    stock.lot(part, "A", (CJO, VJ, M, cp))
    swing = hand_swing(2.0, 12.0, cp=cp)
    below = SearchQuery(v1_v=2.0, v2_v=12.0, min_swing=swing * (1 - 1e-9))
    above = SearchQuery(v1_v=2.0, v2_v=12.0, min_swing=swing * (1 + 1e-9))
    assert numbers(search_parts(below)) == ["SW-2"]
    assert numbers(search_parts(above)) == []


def test_without_a_window_each_part_is_judged_over_its_own_reference_window(stock):
    narrow = stock.part("SW-NARROW", window=(0.0, 3.0))
    wide = stock.part("SW-WIDE", window=(0.0, 15.0))
    for p in (narrow, wide):
        stock.lot(p, "A", (CJO, VJ, M, 0.0))
    threshold = hand_swing(0.0, 3.0) * (1 + 1e-9)  # above the narrow window's swing
    page = search_parts(SearchQuery(min_swing=threshold))
    assert numbers(page) == ["SW-WIDE"]
    assert page.hits[0].v1_v == 0.0 and page.hits[0].v2_v == 15.0
    assert page.hits[0].swing_worst == pytest.approx(hand_swing(0.0, 15.0), rel=1e-12)


def test_the_threshold_applies_to_the_worst_lot(stock, day):
    part = stock.part("SW-LOTS")
    stock.lot(part, "GOOD", (CJO, VJ, M, 0.0), received=day(1))
    stock.lot(part, "WEAK", (CJO, VJ, 0.4, 0.0), received=day(2))
    weak = hand_swing(1.0, 10.0, m=0.4)
    good = hand_swing(1.0, 10.0)
    page = search_parts(SearchQuery(v1_v=1.0, v2_v=10.0, min_swing=weak * (1 - 1e-9)))
    hit = page.hits[0]
    assert hit.worst_lot == "WEAK"
    assert hit.swing_worst == pytest.approx(weak, rel=1e-12)
    assert hit.swing_median == pytest.approx((weak + good) / 2, rel=1e-12)
    assert numbers(search_parts(SearchQuery(v1_v=1.0, v2_v=10.0, min_swing=weak * 1.001))) == []
