"""Delimited text in every layout a bench writes: separators, encodings, line ends, headers.

Expected numbers are the ones written in each sample file (tests/ingest/samples/), scaled
by the SI prefix of the header unit (BIPM SI Brochure, 9th ed., table 7).
"""

import numpy as np
from numpy.testing import assert_allclose

from labdb.ingest import parse_file

RTOL = 1e-12


def only(sample, name):
    sweeps = parse_file(sample(name), name)
    assert len(sweeps) == 1
    return sweeps[0]


def test_it_reads_comma_separated_with_parenthesised_units(sample):
    s = only(sample, "cv_comma.csv")
    assert s.kind == "cv" and s.source == "cv_comma.csv"
    assert_allclose(s.bias_v, [0, 1, 2, 4, 8], rtol=RTOL)
    assert_allclose(
        s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12, 6.5e-12, 5.0625e-12], rtol=RTOL
    )
    assert s.frequency_hz is None
    assert s.columns == {"bias": "V_R (V)", "capacitance": "C (pF)"}
    assert s.lines == [15, 16, 17, 18, 19]  # original file lines, after 13 metadata lines


def test_it_reads_semicolon_decimal_comma(sample):
    s = only(sample, "cv_semicolon_decimal_comma.csv")
    assert_allclose(s.bias_v, [0, 0.5, 1, 2.5, 5], rtol=RTOL)
    assert_allclose(
        s.capacitance_f, [0.0215e-9, 0.0182e-9, 0.0161e-9, 0.0124e-9, 0.0093e-9], rtol=RTOL
    )
    assert s.metadata["temperature_c"] == 23.5
    assert s.metadata["test_level_v"] == 0.03


def test_it_reads_tab_separated_with_extras_in_si(sample):
    s = only(sample, "cv_tab.tsv")
    assert_allclose(s.bias_v, [0, 1.5, 3, 6], rtol=RTOL)
    assert_allclose(s.capacitance_f, [33.2e-12, 25.1e-12, 19.8e-12, 14.6e-12], rtol=RTOL)
    assert_allclose(
        s.extras["conductance_s"], [0.0021e-3, 0.0018e-3, 0.0015e-3, 0.0012e-3], rtol=RTOL
    )
    assert_allclose(s.extras["q"], [150, 180, 210, 260], rtol=RTOL)
    assert_allclose(s.extras["d"], [0.0066667, 0.0055556, 0.0047619, 0.0038462], rtol=RTOL)
    assert_allclose(s.extras["esr_ohm"], [0.45, 0.52, 0.61, 0.75], rtol=RTOL)
    assert s.columns["bias"] == "bias V" and s.columns["capacitance"] == "cap_pF"
    assert s.columns["esr"] == "ESR [Ω]"


def test_it_reads_whitespace_aligned_columns_with_spaced_headers(sample):
    s = only(sample, "cv_whitespace.txt")
    assert_allclose(s.bias_v, [0, 2, 4, 10], rtol=RTOL)
    assert_allclose(s.capacitance_f, [15.3e-12, 9.9e-12, 8.1e-12, 6.0e-12], rtol=RTOL)
    assert_allclose(s.extras["conductance_s"], [0.8e-6, 0.7e-6, 0.6e-6, 0.5e-6], rtol=RTOL)
    assert_allclose(s.extras["esr_ohm"], [1.2, 1.3, 1.4, 1.6], rtol=RTOL)


def test_it_reads_whitespace_columns_with_bracketed_millivolts_and_femtofarads(sample):
    s = only(sample, "cv_whitespace_brackets.dat")
    assert_allclose(s.bias_v, [0, 0.5, 1.0, 1.5], rtol=RTOL)
    assert_allclose(s.capacitance_f, [48500e-15, 41200e-15, 36900e-15, 33800e-15], rtol=RTOL)


def test_it_reads_utf8_bom_and_crlf_with_micro_sign(sample):
    data = sample("cv_bom_crlf.csv")
    assert data.startswith(b"\xef\xbb\xbf") and b"\r\n" in data  # the sample is what it claims
    s = only(sample, "cv_bom_crlf.csv")
    assert s.columns["bias"] == "Voltage (V)"  # BOM not glued to the first header
    assert_allclose(
        s.capacitance_f, [0.000041e-6, 0.000029e-6, 0.0000245e-6, 0.000022e-6], rtol=RTOL
    )
    assert s.metadata["part"] == "LED-RED-5MM"


def test_it_reads_the_greek_mu_spelling(sample):
    s = only(sample, "cv_greek_mu.csv")
    assert_allclose(s.capacitance_f, [0.000120e-6, 0.000095e-6, 0.000081e-6], rtol=RTOL)
    assert_allclose(s.extras["conductance_s"], [0.0000012, 0.0000011, 0.0000010], rtol=RTOL)


def test_it_reads_latin1_with_micro_as_byte_b5(sample):
    data = sample("cv_latin1.csv")
    assert b"\xb5F" in data and b"\xb0C" in data
    s = only(sample, "cv_latin1.csv")
    assert_allclose(
        s.capacitance_f, [0.0000185e-6, 0.0000142e-6, 0.0000121e-6, 0.0000108e-6], rtol=RTOL
    )
    assert s.metadata["temperature_c"] == 25.0
    assert s.metadata["operator"] == "Jörg"


def test_it_reads_plain_farads_and_microfarads(sample):
    s = only(sample, "cv_farads.csv")
    assert_allclose(s.capacitance_f, [1.25e-11, 1.0e-11, 8.5e-12], rtol=RTOL)
    assert_allclose(s.extras["esr_ohm"], [0.9, 1.0, 1.1], rtol=RTOL)
    assert_allclose(s.extras["conductance_s"], [1e-7, 2e-7, 3e-7], rtol=RTOL)
    u = only(sample, "cv_uF.csv")
    assert_allclose(u.capacitance_f, [0.0000125e-6, 0.00001e-6, 0.0000085e-6], rtol=RTOL)


def test_it_skips_comments_and_blank_lines_anywhere(sample):
    s = only(sample, "cv_comments_blank.csv")
    assert_allclose(s.bias_v, [0, 1, 2, 3], rtol=RTOL)
    assert_allclose(s.capacitance_f, [7.42e-12, 5.6e-12, 4.61e-12, 3.98e-12], rtol=RTOL)
    assert s.lines == [8, 9, 12, 13]
    assert s.metadata["part"] == "SMV1233"


def test_it_reads_a_row_of_units_under_the_header(sample):
    s = only(sample, "cv_units_row.csv")
    assert_allclose(s.capacitance_f, [3.3e-12, 2.2e-12, 1.8e-12], rtol=RTOL)
    assert s.lines == [3, 4, 5]


def test_it_accepts_cells_repeating_the_header_unit(sample):
    s = only(sample, "cv_cell_units.csv")
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12], rtol=RTOL)


def test_it_reads_a_text_export_named_like_an_old_workbook():
    data = b"V_R (V)\tC (pF)\n0\t12.5\n1\t9.75\n2\t8.125\n"
    (s,) = parse_file(data, "export.xls")
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12], rtol=RTOL)


def test_it_reads_cr_only_line_ends_and_utf16():
    text = "V,C (pF)\r0,12.5\r1,9.75\r2,8.125\r"
    for data in (text.encode("ascii"), text.encode("utf-16")):
        (s,) = parse_file(data, "old_mac.csv")
        assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12], rtol=RTOL)
        assert s.lines == [2, 3, 4]


def test_it_returns_float_arrays():
    (s,) = parse_file(b"V,C (pF)\n0,1\n1,2\n2,3\n", "ints.csv")
    assert s.bias_v.dtype == np.float64 and s.capacitance_f.dtype == np.float64


def test_it_honours_a_spreadsheet_separator_line():
    (s,) = parse_file(b"sep=;\nV_R (V);C (pF)\n0;12,5\n1;9,75\n2;8,125\n", "excel.csv")
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12], rtol=RTOL)
    assert s.lines == [3, 4, 5]


def test_it_reads_quoted_cells_and_trailing_separators():
    data = b'"V_R (V)","C (pF)",\n"0","12.5",\n1,9.75,\n2,8.125,\n'
    (s,) = parse_file(data, "quoted.csv")
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12], rtol=RTOL)


def test_it_finds_roles_by_unit_and_notes_unused_columns():
    data = b"No.,U (V),pF,T (C),remark\n1,0,12.5,25,a\n2,1,9.75,25,\n3,2,8.125,25,b\n"
    (s,) = parse_file(data, "by_unit.csv")
    assert s.columns == {"bias": "U (V)", "capacitance": "pF"}
    assert_allclose(s.bias_v, [0, 1, 2], rtol=RTOL)
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12], rtol=RTOL)
    assert s.notes == ["column 'T (C)' is not used", "column 'remark' is not used"]


def test_it_notes_that_a_time_without_zone_is_taken_as_utc():
    data = b"# measured at: 2024-07-15 10:30\nV,C (pF)\n0,3\n1,2\n2,1\n"
    (s,) = parse_file(data, "naive.csv")
    assert "'measured at' has no time zone; taken as UTC" in s.notes
