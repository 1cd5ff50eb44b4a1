"""Unit spellings, header splitting and quantity parsing."""

import pytest

from labdb.ingest import parse_quantity
from labdb.ingest.units import parse_number, parse_unit, split_header

# SI prefixes (BIPM SI Brochure, 9th ed., table 7); spellings are common bench practice.
SPELLINGS = [
    ("V", "V", 1.0),
    ("mV", "V", 1e-3),
    ("F", "F", 1.0),
    ("pF", "F", 1e-12),
    ("nF", "F", 1e-9),
    ("fF", "F", 1e-15),
    ("uF", "F", 1e-6),
    ("\u00b5F", "F", 1e-6),  # MICRO SIGN
    ("\u03bcF", "F", 1e-6),  # GREEK SMALL LETTER MU
    ("Hz", "Hz", 1.0),
    ("kHz", "Hz", 1e3),
    ("MHz", "Hz", 1e6),
    ("GHz", "Hz", 1e9),
    ("mhz", "Hz", 1e6),  # case-blind: nobody sweeps in millihertz
    ("S", "S", 1.0),
    ("mS", "S", 1e-3),
    ("uS", "S", 1e-6),
    ("ohm", "ohm", 1.0),
    ("Ohms", "ohm", 1.0),
    ("\u03a9", "ohm", 1.0),  # GREEK CAPITAL OMEGA
    ("\u2126", "ohm", 1.0),  # OHM SIGN
    ("k\u03a9", "ohm", 1e3),
    ("mohm", "ohm", 1e-3),
    ("%", "1", 0.01),
]


@pytest.mark.parametrize(("text", "dim", "scale"), SPELLINGS)
def test_it_reads_every_unit_spelling(text, dim, scale):
    unit = parse_unit(text)
    assert unit is not None
    assert unit.dim == dim
    assert unit.scale == pytest.approx(scale, rel=1e-15)


@pytest.mark.parametrize("text", ["mF", "MOHM", "pcs", "", "R", "bias"])
def test_it_refuses_unknown_or_ambiguous_units(text):
    assert parse_unit(text) is None


@pytest.mark.parametrize(
    ("header", "name", "unit"),
    [
        ("C (pF)", "C", "pF"),
        ("Freq [MHz]", "Freq", "MHz"),
        ("cap_pF", "cap", "pF"),
        ("Vr/V", "Vr", "V"),
        ("bias V", "bias", "V"),
        ("Vr[V]", "Vr", "V"),
        ("V_R (V)", "V_R", "V"),
        ("V_R", "V_R", None),
        ("reverse bias", "reverse bias", None),
        ("C", "C", None),
        ("pF", "", "pF"),
        ("C (measured)", "C", "measured"),
    ],
)
def test_it_splits_headers_into_name_and_unit(header, name, unit):
    assert split_header(header) == (name, unit)


def test_it_reads_decimal_commas_only_when_asked():
    assert parse_number("0,5", decimal_comma=True)[0] == 0.5
    with pytest.raises(ValueError, match="not a number"):
        parse_number("0,5")
    with pytest.raises(ValueError, match="not a number"):
        parse_number("1,234.5", decimal_comma=True)  # thousands separators are refused


@pytest.mark.parametrize("text", ["n/a", "NaN", "inf", "-", "abc", "12p"])
def test_it_refuses_text_that_is_not_a_number(text):
    with pytest.raises(ValueError, match="is not a number"):
        parse_number(text)


def test_it_reads_quantities_with_units():
    # 1 MHz = 1e6 Hz and 50 mV = 0.05 V by the SI prefix definitions (BIPM SI Brochure).
    assert parse_quantity("1 MHz", "Hz") == pytest.approx(1e6, rel=1e-15)
    assert parse_quantity("50 mV", "V") == pytest.approx(0.05, rel=1e-15)
    assert parse_quantity("50 mVrms", "V") == pytest.approx(0.05, rel=1e-15)
    assert parse_quantity("1000", "Hz") == 1000.0
    assert parse_quantity("12.5 pF", "pF") == pytest.approx(12.5, rel=1e-15)
    assert parse_quantity("1,5 MHz", "Hz", decimal_comma=True) == pytest.approx(1.5e6, rel=1e-15)


@pytest.mark.parametrize(
    ("text", "unit", "phrase"),
    [
        ("fast", "Hz", "not a frequency"),
        ("50 mV", "Hz", "is a voltage, not a frequency"),
        ("1e308 GHz", "Hz", "out of range"),
        ("1 MHz", "furlong", "unknown unit"),
    ],
)
def test_it_explains_quantities_it_cannot_read(text, unit, phrase):
    with pytest.raises(ValueError, match=phrase):
        parse_quantity(text, unit)
