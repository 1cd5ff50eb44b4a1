"""Metadata lines: loose keys, typed values, illumination words, merging with outer values."""

from datetime import UTC, datetime, timedelta

import pytest

from labdb.ingest import merge_metadata, normalize_metadata, parse_file
from labdb.ingest.metadata import illumination, measured_at, temperature_c


def test_it_reads_every_metadata_field_of_a_header(sample):
    (s,) = parse_file(sample("cv_comma.csv"), "cv_comma.csv")
    m = s.metadata
    assert (m["part"], m["lot"], m["unit"], m["fixture"]) == ("BB131", "L2024-07", "U03", "meter-1")
    assert m["temperature_c"] == 25.0
    assert m["illumination"] == "dark"
    assert m["measured_at"] == datetime(2024, 7, 15, 8, 30, tzinfo=UTC)  # 10:30 at +02:00
    assert m["measured_at"].utcoffset() == timedelta(hours=2)
    assert m["operator"] == "rk"
    assert m["kind"] == "cv"
    assert m["test_frequency_hz"] == pytest.approx(1e6, rel=1e-15)
    assert m["test_level_v"] == pytest.approx(0.05, rel=1e-15)
    assert m["notes"] == "first lot from the new reel"
    assert m["other"] == {"humidity": "40 %"}


@pytest.mark.parametrize(
    "key", ["Measured at", "measured_at", "MEASURED-AT", "Date", "measured.at"]
)
def test_it_matches_keys_loosely(key):
    meta, issues = normalize_metadata({key: "2024-05-01"})
    assert issues == []
    assert meta["measured_at"] == datetime(2024, 5, 1, tzinfo=UTC)


def test_it_takes_naive_times_as_utc_and_keeps_given_zones():
    assert measured_at("2024-05-01T14:30").tzinfo == UTC
    aware = measured_at("2024-05-01T14:30:00-05:00")
    assert aware.utcoffset() == timedelta(hours=-5)
    assert measured_at("2024-05-01T14:30:00Z") == datetime(2024, 5, 1, 14, 30, tzinfo=UTC)


@pytest.mark.parametrize(
    ("text", "celsius"),
    [
        ("25 °C", 25.0),
        ("25 C", 25.0),
        ("25", 25.0),
        ("25°C", 25.0),
        ("-10 degC", -10.0),
        ("298.15 K", 25.0),  # T(°C) = T(K) − 273.15 (SI Brochure, 2.3.1)
        ("77 °F", 25.0),  # t/°C = (t/°F − 32)/1.8, definition of the Fahrenheit scale (from memory)
    ],
)
def test_it_reads_temperatures_in_degrees_celsius(text, celsius):
    assert temperature_c(text) == pytest.approx(celsius, abs=1e-9)


@pytest.mark.parametrize(
    ("word", "normal"),
    [
        ("dark", "dark"),
        ("off", "dark"),
        ("none", "dark"),
        ("Lights OFF", "dark"),
        ("room", "ambient"),
        ("ambient", "ambient"),
        ("room light", "ambient"),
        ("lit", "illuminated"),
        ("on", "illuminated"),
        ("light", "illuminated"),
        ("LED on", "illuminated"),
        ("illuminated", "illuminated"),
    ],
)
def test_it_normalises_illumination_words(word, normal):
    assert illumination(word) == normal


def test_it_names_an_illumination_word_it_cannot_place():
    with pytest.raises(ValueError, match="'purple' is not a known illumination"):
        illumination("purple")


def test_it_reports_each_bad_metadata_value_on_its_line(broken):
    from labdb.ingest import ParseError

    with pytest.raises(ParseError) as info:
        parse_file(broken("bad_metadata.csv"), "bad_metadata.csv")
    lines = {i.line: i.message for i in info.value.issues}
    assert "purple" in lines[1] and "illumination" in lines[1]
    assert "warm" in lines[2] and "temperature" in lines[2]
    assert "yesterday" in lines[3] and "ISO 8601" in lines[3]
    assert "fast" in lines[4]


def test_it_lets_outer_values_win_and_reports_each_disagreement(sample):
    (s,) = parse_file(sample("cv_comma.csv"), "cv_comma.csv")
    outer, _ = normalize_metadata({"lot": "L2024-08", "temperature": "25", "operator": "RK"})
    merged, conflicts = merge_metadata(s.metadata, outer)
    assert merged["lot"] == "L2024-08"
    assert merged["part"] == "BB131"  # kept from the file
    assert merged["operator"] == "RK"
    assert conflicts == [
        "lot: the file says 'L2024-07' but 'L2024-08' was given; using 'L2024-08'"
    ]  # same temperature and a case-only difference are no conflict


def test_it_merges_other_keys_and_ignores_empty_outer_values():
    file_meta, _ = normalize_metadata({"humidity": "40 %", "part": "BB131"})
    merged, conflicts = merge_metadata(file_meta, {"part": "", "other": {"humidity": "45 %"}})
    assert merged["part"] == "BB131"
    assert merged["other"]["humidity"] == "45 %"
    assert conflicts == ["humidity: the file says '40 %' but '45 %' was given; using '45 %'"]


def test_it_refuses_a_metadata_key_given_twice_with_different_values():
    from labdb.ingest import ParseError

    data = b"# part: BB131\n# Part: BB132\nV,C (pF)\n0,1\n1,2\n2,3\n"
    with pytest.raises(ParseError) as info:
        parse_file(data, "twice.csv")
    (issue,) = info.value.issues
    assert issue.line == 2 and "given twice" in issue.message
