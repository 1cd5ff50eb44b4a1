"""How problems are reported: Issue text and ParseError listing."""

import pytest

from labdb.ingest import Issue, ParseError


def test_an_issue_reads_like_a_location_then_a_message():
    assert str(Issue("cv_03.csv", 14, "C (pF)", "'n/a' is not a number")) == (
        "cv_03.csv line 14, column 'C (pF)': 'n/a' is not a number"
    )
    assert str(Issue("cv_03.csv", 14, None, "m")) == "cv_03.csv line 14: m"
    assert str(Issue("cv_03.csv", None, "C", "m")) == "cv_03.csv, column 'C': m"
    assert str(Issue("cv_03.csv", None, None, "m")) == "cv_03.csv: m"


def test_a_parse_error_lists_its_issues_one_per_line():
    err = ParseError([Issue("a.csv", 2, None, "first"), Issue("a.csv", 3, None, "second")])
    assert str(err) == "a.csv line 2: first\na.csv line 3: second"
    assert len(err.issues) == 2


def test_a_parse_error_needs_an_issue():
    with pytest.raises(ValueError, match="at least one Issue"):
        ParseError([])
