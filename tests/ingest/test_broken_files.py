"""The broken corpus (tests/ingest/broken/): each file is refused with a located message,
or, where the damage is harmless, read correctly."""

import pytest
from numpy.testing import assert_allclose

from labdb.ingest import ParseError, parse_file

# file, expected (line, column) of the first issue, phrase in its message
REFUSED = [
    ("truncated.csv", (5, "C (pF)"), "empty cell"),
    ("wrong_delimiter.csv", (1, None), "only one column found"),
    ("header_comma_rows_semicolon.csv", (2, "V_R (V)"), "holds semicolons but the header"),
    ("text_in_numbers.csv", (3, "C (pF)"), "'n/a' is not a number"),
    ("one_column.csv", (1, None), "only one column found ('C (pF)')"),
    ("empty.csv", (None, None), "the file is empty"),
    ("blank_lines_only.csv", (None, None), "the file is empty"),
    ("comments_only.csv", (None, None), "no header row"),
    ("header_only.csv", (None, None), "no data rows"),
    ("too_few_rows.csv", (None, None), "only 2 data rows"),
    ("binary_junk.csv", (None, None), "not a text file (binary?)"),
    ("control_chars.txt", (None, None), "not a text file (binary?)"),
    ("huge_numbers.csv", (2, "C (pF)"), "'1e400' is out of range"),
    ("huge_after_scaling.csv", (2, "f (GHz)"), "too large once converted to Hz"),
    ("duplicate_header.csv", (1, "C (pF)"), "appears twice"),
    ("two_capacitance_columns.csv", (1, None), "more than one capacitance column"),
    ("mixed_units.csv", (4, "C (pF)"), "mixed units: '12 nF'"),
    (
        "no_unit_implausible.csv",
        (2, "C"),
        "did you mean pF? write the unit in the header, e.g. 'C (pF)'",
    ),
    ("no_unit_frequency.csv", (4, "f"), "did you mean MHz"),
    ("mixed_sign_bias.csv", (2, "V (V)"), "bias has both signs"),
    ("negative_capacitance.csv", (3, "C (pF)"), "'-9.75' is not a positive capacitance"),
    ("numbers_without_header.csv", (1, None), "needs a header row"),
    ("extra_values.csv", (3, None), "row has 3 values but the header names 2 columns"),
    ("unknown_unit.csv", (1, "C (pF/um2)"), "unknown unit 'pF/um2'"),
    ("no_bias_column.csv", (1, None), "no bias column found"),
    ("kind_disagrees.csv", (1, None), "metadata says kind 'fv'"),
    ("unit_metadata_is_a_unit.csv", (1, None), "'pF' is a measurement unit"),
]


@pytest.mark.parametrize(("name", "where", "phrase"), REFUSED)
def test_each_broken_file_is_refused_with_a_located_message(broken, name, where, phrase):
    with pytest.raises(ParseError) as info:
        parse_file(broken(name), name)
    first = info.value.issues[0]
    assert first.file == name
    assert (first.line, first.column) == where
    assert phrase in first.message
    assert str(first) in str(info.value)


def test_it_lists_every_bad_cell_of_a_column(broken):
    with pytest.raises(ParseError) as info:
        parse_file(broken("text_in_numbers.csv"), "text_in_numbers.csv")
    got = [(i.line, i.message) for i in info.value.issues]
    assert got == [
        (3, "'n/a' is not a number"),
        (4, "'abc' is not a number"),
        (5, "empty cell where a number is needed"),
        (6, "'NaN' is not a number"),
    ]


def test_it_caps_the_list_of_issues_and_says_how_many_more(broken):
    with pytest.raises(ParseError) as info:
        parse_file(broken("many_bad_cells.csv"), "many_bad_cells.csv")
    issues = info.value.issues
    assert len(issues) == 21
    assert issues[19].line == 21  # 20 located issues, the first data row is line 2
    assert issues[20].message == "... and 20 more problems not listed"


def test_a_non_monotonic_sweep_is_sorted_not_refused(broken):
    (s,) = parse_file(broken("non_monotonic.csv"), "non_monotonic.csv")
    assert_allclose(s.bias_v, [0, 1, 2, 3, 4], rtol=1e-12)
    assert_allclose(s.capacitance_f, [12.5e-12, 9.75e-12, 8.125e-12, 7.25e-12, 6.5e-12], rtol=1e-12)


def test_a_zip_given_as_a_sweep_file_is_sent_to_the_archive_reader(broken):
    with pytest.raises(ParseError, match="upload it as an archive"):
        parse_file(broken("nested.zip"), "nested.zip")
