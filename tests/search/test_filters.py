"""Kind, text, conditions, units, flags and capacitance limits each narrow the results."""

import pytest

from labdb.quality.models import Flag
from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

pytestmark = pytest.mark.django_db

P = (50e-12, 0.7, 0.5, 0.0)


def found(**kw):
    return [h.part_number for h in search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, **kw)).hits]


def test_kind_and_text_select_parts(stock):
    stock.lot(stock.part("FV-100", kind="varactor", description="tuning diode"), "A", P)
    stock.lot(stock.part("FL-RED", kind="led", description="Red 5 mm LED"), "A", P)
    assert found(kind="led") == ["FL-RED"]
    assert found(text="red 5") == ["FL-RED"]  # description, any case
    assert found(text="fv-1") == ["FV-100"]  # part number, any case
    assert found(text="nothing like it") == []


def test_illumination_and_temperature_band_select_lot_summaries(stock):
    part = stock.part("FC-1")
    stock.lot(part, "A", P, illumination="dark", temperature_c=25.0)
    hot = stock.part("FC-HOT")
    stock.lot(hot, "A", P, illumination="dark", temperature_c=60.0)
    lit = stock.part("FC-LIT")
    stock.lot(lit, "A", P, illumination="illuminated", temperature_c=25.0)
    assert found() == ["FC-1"]  # defaults: dark, 20–30 °C
    assert found(temp_min_c=55.0, temp_max_c=65.0) == ["FC-HOT"]
    assert found(illumination="illuminated") == ["FC-LIT"]


def test_minimum_units_counts_units_over_the_counted_lots(stock, day):
    part = stock.part("FU-1")
    stock.lot(part, "A", P, n_units=3, received=day(1))
    stock.lot(part, "B", P, n_units=4, received=day(2))
    assert found(min_units=7) == ["FU-1"]
    assert found(min_units=8) == []
    assert found(min_units=4, lots="latest") == ["FU-1"]
    assert found(min_units=5, lots="latest") == []


def test_parts_with_an_open_active_flag_can_be_left_out(stock):
    flagged = stock.part("FF-1")
    stock.lot(flagged, "A", P)
    reviewed = stock.part("FF-2")
    stock.lot(reviewed, "A", P)
    Flag.objects.create(part=flagged, rule="z", summary="stands out")
    Flag.objects.create(part=reviewed, rule="z", summary="seen", state="dismissed")
    assert found() == ["FF-1", "FF-2"]  # equal swing: in the order registered
    assert found(exclude_flagged=True) == ["FF-2"]
    hits = {h.part_number: h.open_flags for h in search_parts(SearchQuery()).hits}
    assert hits == {"FF-1": 1, "FF-2": 0}


def test_capacitance_limits_apply_at_the_chosen_end_of_the_window(stock):
    stock.lot(stock.part("FCAP-1"), "A", P)
    # By hand: C(1 V) = 50 pF/√(1 + 1/0.7) = 32.084 pF; C(9 V) = 50 pF/√(1 + 9/0.7) = 13.432 pF.
    c1 = 50e-12 * (1 + 1 / 0.7) ** -0.5
    c2 = 50e-12 * (1 + 9 / 0.7) ** -0.5
    assert c1 == pytest.approx(32.084e-12, rel=1e-4) and c2 == pytest.approx(13.432e-12, rel=1e-4)
    assert found(c_min_f=c1 * 0.999, c_max_f=c1 * 1.001) == ["FCAP-1"]
    assert found(c_min_f=c1 * 1.001) == []
    assert found(c_at="v2", c_min_f=c2 * 0.999, c_max_f=c2 * 1.001) == ["FCAP-1"]
    assert found(c_at="v2", c_max_f=c2 * 0.999) == []
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0)).hits[0]
    assert (hit.c1_f, hit.c2_f) == pytest.approx((c1, c2), rel=1e-12)
