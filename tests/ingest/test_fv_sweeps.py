"""Frequency sweeps of an oscillator fixture, in Hz, kHz, MHz and GHz.

Expected numbers are those written in the samples, scaled by SI prefixes (BIPM SI Brochure).
"""

import pytest
from numpy.testing import assert_allclose

from labdb.ingest import parse_file

RTOL = 1e-12


@pytest.mark.parametrize(
    ("name", "bias", "freq_hz", "header"),
    [
        ("fv_mhz.csv", [0, 1, 2, 4], [10.25e6, 11.5e6, 12.375e6, 13.5e6], "Freq [MHz]"),
        ("fv_khz_semicolon.csv", [0, 2, 4], [455.5e3, 470.25e3, 481e3], "f/kHz"),
        ("fv_ghz.tsv", [0, 1, 3], [1.205e9, 1.31e9, 1.4425e9], "fosc GHz"),
        ("fv_hz_whitespace.txt", [0, 1, 2], [9850000, 10400000, 10725000], "f_Hz"),
    ],
)
def test_it_reads_frequency_sweeps_in_any_frequency_unit(sample, name, bias, freq_hz, header):
    (s,) = parse_file(sample(name), name)
    assert s.kind == "fv"
    assert s.capacitance_f is None
    assert_allclose(s.bias_v, bias, rtol=RTOL)
    assert_allclose(s.frequency_hz, freq_hz, rtol=RTOL)
    assert s.columns["frequency"] == header
    assert s.metadata["kind"] == "fv"


def test_it_keeps_fixture_metadata_of_a_frequency_sweep(sample):
    (s,) = parse_file(sample("fv_mhz.csv"), "fv_mhz.csv")
    assert s.metadata["fixture"] == "osc-2"
    assert s.metadata["unit"] == "U03"
