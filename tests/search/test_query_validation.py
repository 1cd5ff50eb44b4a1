"""Bad queries are refused with a message naming each bad parameter, before any database work."""

import datetime as dt
import math

import pytest

from labdb.search.errors import SearchInputError
from labdb.search.queries import SearchQuery, TankQuery
from labdb.search.services import find_tanks, search_parts

TANK = dict(inductance_h=10e-6, f_low_hz=5e6, f_high_hz=6e6, bias_min_v=0.0, bias_max_v=5.0)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"v1_v": 1.0}, "v2_v"),
        ({"v1_v": 5.0, "v2_v": 1.0}, "v2_v"),
        ({"v1_v": -1.0, "v2_v": 1.0}, "v1_v"),
        ({"v1_v": 0.0, "v2_v": math.inf}, "v2_v"),
        ({"min_swing": 0.0}, "min_swing"),
        ({"c_min_f": -1e-12}, "c_min_f"),
        ({"c_min_f": 5e-12, "c_max_f": 1e-12}, "c_max_f"),
        ({"c_at": "middle"}, "c_at"),
        ({"kind": "valve"}, "kind"),
        ({"illumination": "moonlight"}, "illumination"),
        ({"temp_min_c": 40.0, "temp_max_c": 30.0}, "temp_max_c"),
        ({"lots": "some"}, "lots"),
        ({"lots": "since"}, "since"),
        ({"min_units": 0}, "min_units"),
        ({"sort": "price"}, "sort"),
        ({"page": 0}, "page"),
        ({"per_page": 1000}, "per_page"),
    ],
)
def test_a_bad_search_parameter_is_named(kwargs, field):
    with pytest.raises(SearchInputError) as err:
        search_parts(SearchQuery(**kwargs))
    assert field in err.value.fields
    assert field in str(err.value)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"inductance_h": 0.0}, "inductance_h"),
        ({"fixed_f": -1e-12}, "fixed_f"),
        ({"coupling_f": 0.0}, "coupling_f"),
        ({"f_low_hz": 7e6}, "f_high_hz"),
        ({"f_low_hz": math.nan}, "f_low_hz"),
        ({"bias_min_v": -0.5}, "bias_min_v"),
        ({"bias_max_v": 0.0}, "bias_max_v"),
        ({"max_parts": 0}, "max_parts"),
    ],
)
def test_a_bad_tank_parameter_is_named(kwargs, field):
    with pytest.raises(SearchInputError) as err:
        find_tanks(TankQuery(**{**TANK, **kwargs}))
    assert field in err.value.fields


def test_every_bad_parameter_is_reported_at_once():
    with pytest.raises(SearchInputError) as err:
        SearchQuery(v1_v=3.0, v2_v=1.0, min_swing=-2.0, lots="since").validated()
    assert set(err.value.fields) == {"v2_v", "min_swing", "since"}


def test_a_good_query_passes_unchanged():
    q = SearchQuery(v1_v=0.0, v2_v=4.0, lots="since", since=dt.date(2025, 1, 1))
    assert q.validated() is q
