"""Zip archives of bench files with a manifest.

Expected manifest values and numbers are those written by samples/make_binary_samples.py.
"""

from datetime import UTC, datetime

import pytest
from numpy.testing import assert_allclose

from labdb.ingest import ParseError, merge_metadata, read_archive

RTOL = 1e-12


def entries(sample):
    return {e.name: e for e in read_archive(sample("batch.zip"), "batch.zip")}


def test_it_reads_every_member_and_skips_folders_and_hidden_files(sample):
    got = entries(sample)
    assert sorted(got) == [
        "batch/sweeps.xlsx",
        "batch/u01.csv",
        "batch/u02.csv",
        "batch/u03_no_manifest_row.csv",
    ]
    assert all(e.error is None for e in got.values())


def test_it_attaches_manifest_rows_relative_to_the_manifest_folder(sample):
    e = entries(sample)["batch/u01.csv"]
    assert e.manifest["part"] == "BB131" and e.manifest["unit"] == "U01"
    assert e.manifest["temperature_c"] == 25.0
    assert e.manifest["illumination"] == "dark"
    assert e.manifest["measured_at"] == datetime(2024, 7, 15, 10, 0, tzinfo=UTC)
    (s,) = e.sweeps
    assert s.source == "batch/u01.csv"
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12, 6.5e-12], rtol=RTOL)


def test_it_reads_a_member_without_a_manifest_row_from_its_own_metadata(sample):
    e = entries(sample)["batch/u03_no_manifest_row.csv"]
    assert e.manifest is None
    (s,) = e.sweeps
    assert s.metadata["unit"] == "U03" and s.metadata["part"] == "BB131"
    assert_allclose(s.capacitance_f, [12.25e-12, 9.5e-12, 8.0e-12, 6.375e-12], rtol=RTOL)


def test_it_keeps_raw_bytes_of_each_member(sample):
    e = entries(sample)["batch/u01.csv"]
    assert e.data == b"V_R (V),C (pF)\n0,12.5\n1,9.75\n2,8.125\n4,6.5\n"


def test_it_reads_workbooks_inside_the_archive(sample):
    (s,) = entries(sample)["batch/sweeps.xlsx"].sweeps
    assert s.metadata["unit"] == "U05"


def test_the_manifest_wins_over_the_file_when_merged(sample):
    e = entries(sample)["batch/u02.csv"]
    (s,) = e.sweeps
    merged, conflicts = merge_metadata(s.metadata, e.manifest)
    assert merged["lot"] == "L2024-07"
    assert conflicts == ["lot: the file says 'L2024-06' but 'L2024-07' was given; using 'L2024-07'"]


def test_one_bad_member_does_not_hide_the_others(broken):
    got = {e.name: e for e in read_archive(broken("bad_member.zip"), "bad_member.zip")}
    assert got["good.csv"].error is None and len(got["good.csv"].sweeps) == 1
    bad = got["bad.csv"].error.issues[0]
    assert (bad.file, bad.line, bad.column) == ("bad.csv", 3, "C (pF)")
    assert "'n/a' is not a number" in bad.message
    assert "not a text file" in str(got["notes.pdf"].error)


def test_it_refuses_an_archive_whose_manifest_is_wrong(broken):
    with pytest.raises(ParseError) as info:
        read_archive(broken("bad_manifest.zip"), "bad_manifest.zip")
    issues = info.value.issues
    assert (issues[0].file, issues[0].line) == ("manifest.csv", 2)
    assert "'hot' is not a temperature" in issues[0].message
    assert (issues[1].line, issues[1].column) == (3, "file")
    assert "'missing.csv' is not in the archive" in issues[1].message
