"""Wide files: one bias column and one reading column per unit give one sweep per unit."""

import pytest
from numpy.testing import assert_allclose

from labdb.ingest import ParseError, parse_file

RTOL = 1e-12


def test_it_splits_a_wide_file_with_units_in_the_headers(sample):
    sweeps = parse_file(sample("wide_units_in_header.csv"), "wide_units_in_header.csv")
    assert [s.unit_label for s in sweeps] == ["U01", "U02", "U03"]
    assert [s.metadata["unit"] for s in sweeps] == ["U01", "U02", "U03"]
    for s in sweeps:
        assert_allclose(s.bias_v, [0, 1, 2, 4], rtol=RTOL)
        assert s.metadata["part"] == "BB131" and s.metadata["lot"] == "L2024-07"
    assert_allclose(sweeps[1].capacitance_f, [12.75e-12, 10.0e-12, 8.25e-12, 6.625e-12], rtol=RTOL)
    assert sweeps[2].columns == {"bias": "V_R (V)", "capacitance": "U03 (pF)"}


def test_it_takes_the_reading_unit_from_metadata(sample):
    a1, a2 = parse_file(sample("wide_metadata_unit.csv"), "wide_metadata_unit.csv")
    assert (a1.unit_label, a2.unit_label) == ("A1", "A2")
    assert_allclose(a1.capacitance_f, [0.00742e-9, 0.0056e-9, 0.00398e-9], rtol=RTOL)
    assert_allclose(a2.capacitance_f, [0.00751e-9, 0.00566e-9, 0.00402e-9], rtol=RTOL)
    assert "unit of readings" not in a1.metadata["other"]  # a directive, not metadata


def test_it_reads_a_wide_frequency_file(sample):
    a, b = parse_file(sample("wide_frequency.csv"), "wide_frequency.csv")
    assert a.kind == b.kind == "fv"
    assert_allclose(b.frequency_hz, [10.5e6, 11.75e6, 12.5e6], rtol=RTOL)


def test_it_refuses_unit_columns_without_any_unit(broken):
    with pytest.raises(ParseError) as info:
        parse_file(broken("wide_without_units.csv"), "wide_without_units.csv")
    (issue,) = info.value.issues
    assert issue.line == 1
    assert "'U01 (pF)'" in issue.message and "unit of readings" in issue.message


def test_it_refuses_wide_readings_without_a_unit_when_implausible():
    data = b"# quantity: capacitance\nV,U01,U02\n0,12.5,12.7\n1,9.75,9.8\n2,8.1,8.2\n"
    with pytest.raises(ParseError) as info:
        parse_file(data, "wide_si.csv")
    issue = info.value.issues[0]
    assert issue.column == "U01" and "did you mean pF" in issue.message
    assert "'U01 (pF)'" in issue.message


def test_it_refuses_a_wide_file_mixing_capacitance_and_frequency():
    data = b"V,U01 (pF),U02 (MHz)\n0,12.5,10\n1,9.75,11\n2,8.1,12\n"
    with pytest.raises(ParseError, match="mix capacitance and frequency"):
        parse_file(data, "mixed_wide.csv")


def test_it_refuses_two_unit_columns_with_one_label():
    data = b"V,U01 (pF),U01 (nF)\n0,12.5,0.0125\n1,9.75,0.00975\n2,8.1,0.0081\n"
    with pytest.raises(ParseError) as info:
        parse_file(data, "twice.csv")
    assert [i.column for i in info.value.issues] == ["U01 (pF)", "U01 (nF)"]
    assert "same label" in info.value.issues[0].message
