"""Results come in the order asked for, a page at a time, with the total."""

import pytest

from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

pytestmark = pytest.mark.django_db


@pytest.fixture
def five_parts(stock, day):
    # Grading coefficient M rises with the number, so swing does too; CJO falls.
    for i in range(5):
        part = stock.part(f"SP-{i}")
        stock.lot(
            part,
            "A",
            (100e-12 - i * 10e-12, 0.7, 0.3 + 0.1 * i, 0.0),
            n_units=1,
            received=day(10 * ((i * 3) % 5) + 1),
        )


def order(**kw):
    return [h.part_number for h in search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, **kw)).hits]


def test_swing_orders_largest_first(five_parts):
    assert order() == ["SP-4", "SP-3", "SP-2", "SP-1", "SP-0"]


def test_capacitance_orders_either_way(five_parts):
    # C(1 V) = CJO·(1.7/0.7)^(−M) falls with the number (CJO smaller, M larger).
    assert order(sort="cap_high") == ["SP-0", "SP-1", "SP-2", "SP-3", "SP-4"]
    assert order(sort="cap_low") == ["SP-4", "SP-3", "SP-2", "SP-1", "SP-0"]


def test_recent_orders_by_newest_lot(five_parts):
    # Receipt days 1, 31, 11, 41, 21 for SP-0 … SP-4.
    assert order(sort="recent") == ["SP-3", "SP-1", "SP-4", "SP-2", "SP-0"]


def test_pages_split_the_ranking_and_report_the_total(five_parts):
    first = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, per_page=2, page=1))
    last = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, per_page=2, page=3))
    assert (first.total, first.n_pages, last.page) == (5, 3, 3)
    assert [h.part_number for h in first.hits] == ["SP-4", "SP-3"]
    assert [h.part_number for h in last.hits] == ["SP-0"]
    past = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, per_page=2, page=9))
    assert past.page == 3 and [h.part_number for h in past.hits] == ["SP-0"]
