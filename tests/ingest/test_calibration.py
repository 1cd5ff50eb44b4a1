"""Calibration tables of an oscillator fixture (reference capacitance and frequency).

Expected numbers are those written in samples/calibration.csv.
"""

import pytest
from numpy.testing import assert_allclose

from labdb.ingest import ParsedCalibration, ParseError, parse_calibration

RTOL = 1e-12


def test_it_reads_a_calibration_table_with_the_open_fixture(sample):
    cal = parse_calibration(sample("calibration.csv"), "calibration.csv")
    assert isinstance(cal, ParsedCalibration)
    assert_allclose(cal.ref_capacitance_f, [0, 10e-12, 22e-12, 47e-12, 100e-12], rtol=RTOL, atol=0)
    assert_allclose(cal.freq_hz, [15.2e6, 12.0e6, 9.9e6, 7.6e6, 5.6e6], rtol=RTOL)
    assert cal.metadata["fixture"] == "osc-2" and cal.metadata["operator"] == "rk"
    assert cal.columns == {"reference": "C_ref (pF)", "frequency": "f (MHz)"}
    assert cal.lines == [5, 6, 7, 8, 9]


def test_it_reads_a_semicolon_calibration_with_other_names():
    data = "reference [nF];fosc [kHz];remark\n0;1520,5;open\n0,1;560;\n0,047;760;\n"
    cal = parse_calibration(data.encode("utf-8"), "cal.csv")
    assert_allclose(cal.ref_capacitance_f, [0, 0.1e-9, 0.047e-9], rtol=RTOL, atol=0)
    assert_allclose(cal.freq_hz, [1520.5e3, 560e3, 760e3], rtol=RTOL)


def test_it_refuses_a_single_reference(broken):
    with pytest.raises(ParseError, match="at least two different references"):
        parse_calibration(broken("calibration_one_reference.csv"), "cal.csv")


def test_it_refuses_negative_references_and_zero_frequency():
    data = b"C_ref (pF),f (MHz)\n0,15.2\n-10,12.0\n22,0\n"
    with pytest.raises(ParseError) as info:
        parse_calibration(data, "cal.csv")
    got = [(i.line, i.column) for i in info.value.issues]
    assert got == [(3, "C_ref (pF)"), (4, "f (MHz)")]
    assert "not a nonnegative capacitance" in info.value.issues[0].message
    assert "not a positive frequency" in info.value.issues[1].message


def test_it_names_the_missing_column():
    with pytest.raises(ParseError, match=r"exactly one frequency column \(e.g. 'f \(MHz\)'\)"):
        parse_calibration(b"C_ref (pF),Q\n0,1\n10,2\n", "cal.csv")
