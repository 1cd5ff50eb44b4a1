"""Touchstone 1.1 specification examples (IBIS open forum), as recalled FROM MEMORY.

The specification shows a one-port S-parameter file with a single point, a one-port
Z-parameter file and a two-port S-parameter file; the texts below follow their layout and
option lines as remembered, not copied (the numbers may differ from the printed ones). The
expected impedance is hand-worked from Z = Z0(1 + S11)/(1 − S11).
"""

import numpy as np
import pytest

from labdb.ingest.errors import ParseError
from labdb.ingest.impedance import parse_impedance_file
from labdb.ingest.touchstone import read_touchstone

ONE_PORT_S = b"""!1-port S-parameter file, single frequency point
# MHz S MA R 50
!freq magS11 angS11
2.000 0.894 -12.136
"""

ONE_PORT_Z = b"""!1-port Z-parameter file, multiple frequency points
# MHz Z MA
!freq magZ11 angZ11
100 74.25 -4
200 60 -22
300 53.025 -45
400 30 -62
500 0.0001 -89
"""

TWO_PORT_S = b"""!2-port S-parameter file, three frequency points
# GHz S MA R 50
!freq magS11 angS11 magS21 angS21 magS12 angS12 magS22 angS22
1.000 0.3926 -61.32 3.2436 109.3 0.0546 47.89 0.6163 -41.52
2.000 0.3503 -104.33 2.8263 79.23 0.0742 14.11 0.5698 -74.78
3.000 0.3191 -145.32 2.4316 67.45 0.0898 11.52 0.5487 -94.89
"""


def test_the_one_port_s_example_reads_and_gives_the_hand_worked_impedance():
    ts = read_touchstone(ONE_PORT_S, "example1.s1p")
    assert (ts.unit, ts.parameter, ts.format, ts.z0_ohm) == ("MHz", "S", "MA", 50.0)
    assert ts.frequency_hz.tolist() == [2e6]
    # By hand: 12.136° → cos 0.977652, sin 0.210233; S11 = 0.874021 − 0.187948j;
    # (1 + S)/(1 − S) = (0.200763 − 0.375896j)/0.0511951 = 3.92153 − 7.34246j; × 50 Ω.
    z = 50 * (1 + ts.s11[0]) / (1 - ts.s11[0])
    assert z.real == pytest.approx(196.08, rel=5e-4)
    assert z.imag == pytest.approx(-367.12, rel=5e-4)


def test_the_one_point_example_is_too_short_to_be_a_sweep():
    with pytest.raises(ParseError, match="only 1 frequency points"):
        parse_impedance_file(ONE_PORT_S, "example1.s1p")


def test_the_z_parameter_example_is_refused_at_its_option_line():
    with pytest.raises(ParseError) as err:
        parse_impedance_file(ONE_PORT_Z, "example2.s1p")
    issue = err.value.issues[0]
    assert issue.line == 2 and "impedance (Z)" in issue.message


def test_the_two_port_example_is_refused_by_name_and_by_its_data():
    with pytest.raises(ParseError, match="2-port"):
        parse_impedance_file(TWO_PORT_S, "example4.s2p")
    with pytest.raises(ParseError) as err:
        parse_impedance_file(TWO_PORT_S, "renamed.s1p")
    assert err.value.issues[0].line == 4 and "two-port" in err.value.issues[0].message


@pytest.mark.parametrize(
    "line, want",
    [
        ("# GHz S MA R 50", ("GHz", "S", "MA", 50.0)),
        ("# MHz S DB R 75", ("MHz", "S", "DB", 75.0)),
        ("# Hz S RI R 50", ("Hz", "S", "RI", 50.0)),
        ("# KHZ S RI", ("kHz", "S", "RI", 50.0)),  # R left out: 50 Ω
        ("# S", ("GHz", "S", "MA", 50.0)),  # everything else left out
        ("#", ("GHz", "S", "MA", 50.0)),
    ],
)
def test_option_lines_in_the_forms_the_specification_allows(line, want):
    ts = read_touchstone(f"{line}\n1 0.5 0\n".encode(), "x.s1p")
    assert (ts.unit, ts.parameter, ts.format, ts.z0_ohm) == want
    assert np.isclose(ts.s11[0], 0.5 if want[2] != "DB" else 10 ** (0.5 / 20))
