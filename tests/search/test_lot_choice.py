"""Which lots count: the latest measured lot, every lot, or lots received since a date."""

import pytest

from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

pytestmark = pytest.mark.django_db

STRONG = (50e-12, 0.7, 0.6, 0.0)
WEAK = (50e-12, 0.7, 0.3, 0.0)


def swing(m, v1=1.0, v2=10.0, vj=0.7):
    # With CP = 0: C(V1)/C(V2) = ((VJ + V2)/(VJ + V1))^M (from the SPICE formula, by hand).
    return ((vj + v2) / (vj + v1)) ** m


@pytest.fixture
def old_weak_new_strong(stock, day):
    part = stock.part("LC-1")
    stock.lot(part, "OLD", WEAK, received=day(10))
    stock.lot(part, "NEW", STRONG, received=day(200))
    return part


def query(**kw):
    return SearchQuery(v1_v=1.0, v2_v=10.0, min_swing=swing(0.45), **kw)


def test_every_lot_counts_by_default_so_the_weak_old_lot_excludes_the_part(old_weak_new_strong):
    assert search_parts(query()).total == 0
    assert search_parts(SearchQuery(v1_v=1.0, v2_v=10.0)).hits[0].n_lots == 2


def test_the_latest_lot_alone_passes(old_weak_new_strong):
    hit = search_parts(query(lots="latest")).hits[0]
    assert [lot.code for lot in hit.lots] == ["NEW"]
    assert hit.swing_worst == pytest.approx(swing(0.6), rel=1e-12)


def test_lots_received_since_a_date_pass(old_weak_new_strong, day):
    assert [h.part_number for h in search_parts(query(lots="since", since=day(100))).hits] == [
        "LC-1"
    ]
    assert search_parts(query(lots="since", since=day(5))).total == 0


def test_latest_means_latest_measured_under_the_conditions(old_weak_new_strong, stock, day):
    # A newer lot measured only when illuminated does not displace NEW in the dark.
    stock.lot(old_weak_new_strong, "NEWER", WEAK, received=day(300), illumination="illuminated")
    hit = search_parts(query(lots="latest")).hits[0]
    assert [lot.code for lot in hit.lots] == ["NEW"]


def test_a_lot_without_a_receipt_date_is_never_the_latest(stock, day):
    part = stock.part("LC-2")
    stock.lot(part, "UNDATED", WEAK, received=None)
    stock.lot(part, "DATED", STRONG, received=day(1))
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=10.0, lots="latest")).hits[0]
    assert [lot.code for lot in hit.lots] == ["DATED"]
    assert hit.latest_received == day(1)


def test_latest_over_a_temperature_range_spans_its_bands(old_weak_new_strong, stock, day):
    # NEWER is the newest lot of the 30 °C band only; over 20–30 °C it is the latest of all,
    # so it displaces NEW (the newest of the 25 °C band). Common practice, no source.
    stock.lot(old_weak_new_strong, "NEWER", WEAK, received=day(300), temperature_c=30.0)
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=10.0, lots="latest")).hits[0]
    assert [lot.code for lot in hit.lots] == ["NEWER"]
    # Over 20–27 °C the 30 °C band is left out and NEW is the latest again.
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=10.0, lots="latest", temp_max_c=27.0)).hits[0]
    assert [lot.code for lot in hit.lots] == ["NEW"]


def test_equal_receipt_dates_go_to_the_lot_registered_later(stock, day):
    part = stock.part("LC-3")
    stock.lot(part, "FIRST", WEAK, received=day(7))
    stock.lot(part, "SECOND", STRONG, received=day(7))
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=10.0, lots="latest")).hits[0]
    assert [lot.code for lot in hit.lots] == ["SECOND"]
