"""Broken Touchstone files: located messages from the reader, and nothing stored on upload."""

from pathlib import Path

import pytest
from django.conf import settings

from labdb.ingest.errors import ParseError
from labdb.ingest.impedance import parse_impedance_file
from labdb.measurements.models import ImpedanceFit, Sweep
from labdb.measurements.services import record_file

HEAD = "! part: TST-V1\n! lot: L1\n! unit: U1\n! fixture: analyser A\n! bias: 2 V\n"

# name, file text, expected line, words the message must hold
BROKEN = [
    ("wrong_format", HEAD + "# MHz S XY R 50\n1 0 0\n", 6, ["XY", "RI, MA, DB"]),
    ("r_without_ohms", HEAD + "# MHz S RI R\n1 0 0\n", 6, ["'R 50'"]),
    ("r_not_positive", HEAD + "# MHz S RI R -50\n1 0 0\n", 6, ["reference resistance"]),
    ("z_parameters", HEAD + "# MHz Z RI R 50\n1 0 0\n", 6, ["impedance (Z)", "S11"]),
    ("y_parameters", HEAD + "# MHz Y MA R 50\n1 0 0\n", 6, ["admittance (Y)"]),
    ("two_units", HEAD + "# MHz GHz S RI R 50\n1 0 0\n", 6, ["frequency unit twice"]),
    ("odd_count", HEAD + "# MHz S RI R 50\n1 0 0\n2 0.1\n3 0 0\n", 8, ["2 values", "3"]),
    ("four_values", HEAD + "# MHz S RI R 50\n1 0 0\n2 0.1 0.2 0.3\n", 8, ["incomplete pair"]),
    (
        "two_port",
        HEAD + "# GHz S MA R 50\n1.0 0.39 -61.3 3.24 109.3 0.054 47.9 0.61 -41.5\n",
        7,
        ["two-port", "one-port"],
    ),
    ("falling", HEAD + "# MHz S RI R 50\n1 0 0\n3 0 0\n2 0 0\n", 9, ["lower than", "line 8"]),
    ("repeated", HEAD + "# MHz S RI R 50\n1 0 0\n2 0 0\n2 0 0\n", 9, ["repeats", "line 8"]),
    ("data_first", HEAD + "1 0 0\n# MHz S RI R 50\n", 6, ["before the option line"]),
    ("second_option", HEAD + "# MHz S RI R 50\n1 0 0\n# GHz S MA R 50\n2 0 0\n", 8, ["second"]),
    ("version_two", "[Version] 2.0\n# MHz S RI R 50\n1 0 0\n", 1, ["[Version]", "1.1"]),
    ("text_cell", HEAD + "# MHz S RI R 50\n1 0 zero\n", 7, ["'zero' is not a number"]),
    ("negative_magnitude", HEAD + "# MHz S MA R 50\n1 -0.5 0\n", 7, ["negative"]),
    ("ideal_open", HEAD + "# MHz S RI R 50\n1 1 0\n2 0 0\n3 0 0\n", 7, ["ideal open"]),
]


@pytest.mark.parametrize("name, text, line, words", BROKEN, ids=[b[0] for b in BROKEN])
def test_a_broken_file_gets_a_located_message(name, text, line, words):
    with pytest.raises(ParseError) as err:
        parse_impedance_file(text.encode(), f"{name}.s1p")
    issue = err.value.issues[0]
    assert issue.file == f"{name}.s1p"
    assert issue.line == line, str(err.value)
    for w in words:
        assert w in issue.message, issue.message


def test_a_two_port_file_name_is_refused_before_reading():
    with pytest.raises(ParseError, match=r"2-port Touchstone file \(\.s2p\)"):
        parse_impedance_file(b"# GHz S MA R 50\n1 0 0 0 0 0 0 0 0\n", "amp.s2p")


def test_a_file_with_fewer_than_three_points_is_refused():
    with pytest.raises(ParseError, match="only 2 frequency points"):
        parse_impedance_file((HEAD + "# MHz S RI R 50\n1 0 0\n2 0 0\n").encode(), "a.s1p")


def test_an_empty_file_is_refused():
    with pytest.raises(ParseError, match="empty"):
        parse_impedance_file(b"", "a.s1p")


def test_a_file_with_only_an_option_line_is_refused():
    with pytest.raises(ParseError, match="no data lines") as err:
        parse_impedance_file(b"# MHz S RI R 50\n", "a.s1p")
    assert err.value.issues[0].line == 1


def _files_on_disk():
    root = Path(settings.MEDIA_ROOT)
    return sorted(p for p in root.rglob("*") if p.is_file()) if root.exists() else []


@pytest.mark.django_db
@pytest.mark.parametrize("name, text, line, words", BROKEN, ids=[b[0] for b in BROKEN])
def test_uploading_a_broken_file_stores_nothing(analyser, name, text, line, words):
    (out,) = record_file(text.encode(), f"{name}.s1p")
    assert out.status == "rejected"
    assert out.problems[0].line == line and out.problems[0].file == f"{name}.s1p"
    assert Sweep.objects.count() == 0 and ImpedanceFit.objects.count() == 0
    assert _files_on_disk() == []
