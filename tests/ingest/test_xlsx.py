"""Excel workbooks: first or named sheet, metadata in cells, rows as line numbers.

Expected numbers are those written by samples/make_binary_samples.py into workbook.xlsx.
"""

import io
from datetime import UTC, datetime

import openpyxl
import pytest
from numpy.testing import assert_allclose

from labdb.ingest import ParseError, parse_file

RTOL = 1e-12


def book(rows, title="Data"):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = title
    for row in rows:
        ws.append(row)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def test_it_reads_the_first_sheet_with_metadata_in_cells(sample):
    (s,) = parse_file(sample("workbook.xlsx"), "workbook.xlsx")
    assert_allclose(s.bias_v, [0, 1, 2, 4], rtol=RTOL)
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12, 6.5e-12], rtol=RTOL)
    assert_allclose(s.extras["q"], [120, 140, 155, 170], rtol=RTOL)
    m = s.metadata
    assert (m["part"], m["lot"], m["unit"]) == ("BB131", "L2024-07", "U05")
    assert m["temperature_c"] == 25.0
    assert m["measured_at"] == datetime(2024, 7, 15, 9, 45, tzinfo=UTC)
    assert s.lines == [8, 9, 11, 12]  # worksheet rows; row 10 is a comment


def test_it_reads_a_named_sheet(sample):
    sweeps = parse_file(sample("workbook.xlsx"), "workbook.xlsx", sheet="Wide")
    assert [s.unit_label for s in sweeps] == ["U01", "U02"]
    assert_allclose(sweeps[1].capacitance_f, [12.75e-12, 8.25e-12, 6.625e-12], rtol=RTOL)


def test_it_lists_the_sheets_when_the_named_one_is_missing(sample):
    with pytest.raises(ParseError) as info:
        parse_file(sample("workbook.xlsx"), "workbook.xlsx", sheet="Results")
    assert "no sheet named 'Results'" in str(info.value)
    assert "'Sweep', 'Wide'" in str(info.value)


def test_it_locates_bad_cells_by_sheet_and_row():
    data = book([["V (V)", "C (pF)"], [0, 12.5], [1, "n/a"], [2, None], [3, True], [4, 6.5]])
    with pytest.raises(ParseError) as info:
        parse_file(data, "bench.xlsx")
    got = [(i.file, i.line, i.column) for i in info.value.issues]
    assert got == [
        ("bench.xlsx [Data]", 3, "C (pF)"),
        ("bench.xlsx [Data]", 4, "C (pF)"),
        ("bench.xlsx [Data]", 5, "C (pF)"),
    ]
    assert "'n/a' is not a number" in info.value.issues[0].message
    assert "empty cell" in info.value.issues[1].message


def test_it_refuses_a_damaged_workbook(sample):
    data = sample("workbook.xlsx")
    with pytest.raises(ParseError, match="not a readable .xlsx workbook"):
        parse_file(data[: len(data) // 2], "workbook.xlsx")
    with pytest.raises(ParseError, match="no zip signature"):
        parse_file(b"V,C\n0,1\n", "looks.xlsx")


def test_it_refuses_a_legacy_binary_workbook():
    ole = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(504)
    with pytest.raises(ParseError, match=r"old Excel \(.xls\)"):
        parse_file(ole, "old.xls")


def test_it_stops_at_a_sheet_far_longer_than_any_sweep(monkeypatch):
    from labdb.ingest import xlsx

    monkeypatch.setattr(xlsx, "MAX_ROWS", 50)  # the real bound (100 000) works the same way
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["V (V)", "C (pF)"])
    ws.append([0, 12.5])
    ws.cell(row=51, column=1, value=1)
    buf = io.BytesIO()
    wb.save(buf)
    with pytest.raises(ParseError, match="more than 50 rows"):
        parse_file(buf.getvalue(), "long.xlsx")


def test_it_refuses_a_sheet_wider_than_it_reads():
    data = book([["V (V)"] + [f"U{i} (pF)" for i in range(300)], [0] + [1.0] * 300])
    with pytest.raises(ParseError, match="more than 256 columns"):
        parse_file(data, "wide.xlsx")
