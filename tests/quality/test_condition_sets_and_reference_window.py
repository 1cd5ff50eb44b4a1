"""Condition sets group sweeps by illumination and 5 °C band; the reference window has defaults."""

import pytest

from labdb.catalog.models import Part
from labdb.quality.services import (
    condition_key,
    parse_condition,
    reference_window,
    temperature_band,
)


@pytest.mark.parametrize(
    ("t", "band"),
    [
        (25.0, 25.0),
        (22.4, 20.0),
        (22.5, 25.0),
        (27.49, 25.0),
        (27.5, 30.0),
        (-2.4, 0.0),
        (-2.6, -5.0),
        (45.0, 45.0),
    ],
)
def test_a_temperature_falls_in_the_nearest_five_degree_band(t, band):
    assert temperature_band(t) == band


def test_condition_keys_round_trip():
    assert condition_key("dark", 25.0) == "dark@25C"
    assert parse_condition("illuminated@-5C") == ("illuminated", -5.0)
    assert parse_condition("nonsense") is None


def _part(**kw):
    return Part(part_number="W", **kw)  # not saved: the window needs no database


def test_defaults_are_zero_volts_to_the_rating():
    w = reference_window(_part(rated_reverse_v=5.0), 0.0, 5.0)
    assert (w.low_v, w.high_v) == (0.0, 5.0) and "rated" in w.source


def test_sweeps_starting_above_zero_start_the_window_at_their_lowest_bias():
    w = reference_window(_part(rated_reverse_v=30.0), 0.5, 30.0)
    assert (w.low_v, w.high_v) == (0.5, 30.0)


def test_the_window_never_extends_past_the_measured_range():
    w = reference_window(_part(rated_reverse_v=30.0), 0.0, 12.0)
    assert w.high_v == 12.0 and "highest measured" in w.source


def test_part_settings_win():
    w = reference_window(
        _part(rated_reverse_v=30.0, ref_bias_low_v=1.0, ref_bias_high_v=20.0), 0.0, 25.0
    )
    assert (w.low_v, w.high_v) == (1.0, 20.0) and w.source.count("part setting") == 2


def test_no_window_from_a_single_bias():
    assert reference_window(_part(), 2.0, 2.0) is None
