"""A window beyond a lot's measured bias range leaves the lot out, and says so, unless asked."""

import pytest

from labdb.search.queries import SearchQuery, TankQuery
from labdb.search.services import find_tanks, search_parts

pytestmark = pytest.mark.django_db

PARAMS = (50e-12, 0.7, 0.5, 0.0)


@pytest.fixture
def short_and_full(stock, day):
    part = stock.part("EX-1")
    stock.lot(part, "FULL", PARAMS, measured=(0.0, 20.0), received=day(1))
    stock.lot(part, "SHORT", PARAMS, measured=(0.0, 5.0), received=day(2))
    return part


def test_a_lot_measured_over_a_narrower_range_is_left_out_with_a_warning(short_and_full):
    page = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0))
    hit = page.hits[0]
    assert [lot.code for lot in hit.lots] == ["FULL"]
    assert hit.n_left_out == 1 and any("left out" in w for w in hit.warnings)
    assert any(
        "1 lot summary of 1 part(s) were left out" in w and "1–9 V" in w for w in page.warnings
    )


def test_asking_for_extrapolated_lots_shows_them_marked(short_and_full):
    page = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, include_extrapolated=True))
    hit = page.hits[0]
    marks = {lot.code: lot.extrapolated for lot in hit.lots}
    assert marks == {"FULL": False, "SHORT": True}
    assert hit.n_extrapolated == 1 and hit.n_left_out == 0
    assert any("extrapolated" in w for w in hit.warnings)
    assert any("beyond their measured bias range" in w for w in page.warnings)


def test_a_window_inside_every_measured_range_warns_of_nothing(short_and_full):
    page = search_parts(SearchQuery(v1_v=0.0, v2_v=5.0))
    assert page.warnings == () and page.hits[0].warnings == ()
    assert page.hits[0].n_lots == 2


def test_a_part_measured_only_over_a_narrower_range_disappears_but_is_counted(stock):
    stock.lot(stock.part("EX-2"), "A", PARAMS, measured=(0.5, 8.0))
    page = search_parts(SearchQuery(v1_v=0.0, v2_v=8.0))  # starts below the measured 0.5 V
    assert page.total == 0
    assert any("1 lot summary of 1 part(s) were left out" in w for w in page.warnings)


def test_the_tank_finder_leaves_out_and_reports_lots_the_bias_range_exceeds(short_and_full):
    q = TankQuery(
        inductance_h=10e-6,
        fixed_f=20e-12,
        f_low_hz=6e6,
        f_high_hz=7e6,
        bias_min_v=0.5,
        bias_max_v=10.0,
    )
    result = find_tanks(q)
    assert [lot.code for lot in result.candidates[0].lots] == ["FULL"]
    assert any("were left out" in w and "0.5–10 V" in w for w in result.warnings)
    marked = find_tanks(TankQuery(**{**q.__dict__, "include_extrapolated": True}))
    lots = {lot.code: lot.extrapolated for lot in marked.candidates[0].lots}
    assert lots == {"FULL": False, "SHORT": True}
    assert any("marked ‘extrapolated’" in w for w in marked.warnings)
