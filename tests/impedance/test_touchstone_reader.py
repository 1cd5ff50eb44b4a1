"""Reading Touchstone 1.x one-port files: formats, units, defaults, comments and metadata.

Expected impedances are hand-worked from Z = Z0(1 + S11)/(1 − S11) with Z0 = 50 Ω (the
definition of the reflection coefficient; any microwave text, e.g. Pozar, Microwave
Engineering, ch. 2 — from memory).
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.ingest.impedance import parse_impedance_file
from labdb.ingest.touchstone import read_touchstone

# S11 = 1/3 → Z = 50·(4/3)/(2/3) = 100 Ω; S11 = j → Z = 50·(1+j)/(1−j) = 50j Ω;
# S11 = −1/3 → Z = 50·(2/3)/(4/3) = 25 Ω. Written in each data format below.
WANT = np.array([100.0, 50j, 25.0])
BODIES = {
    "RI": "1 0.333333333333333 0\n2 0 1\n3 -0.333333333333333 0\n",
    "MA": "1 0.333333333333333 0\n2 1 90\n3 0.333333333333333 180\n",
    # 20·log10(1/3) = −9.542425094393 dB; 20·log10(1) = 0 dB
    "DB": "1 -9.542425094393249 0\n2 0 90\n3 -9.542425094393249 180\n",
}


@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
def test_each_data_format_gives_the_hand_worked_impedance(fmt):
    data = f"! bias: 1 V\n# MHz S {fmt} R 50\n{BODIES[fmt]}".encode()
    parsed = parse_impedance_file(data, "x.s1p")
    assert_allclose(parsed.frequency_hz, [1e6, 2e6, 3e6], rtol=1e-15)
    assert_allclose(parsed.z_ohm, WANT, rtol=0, atol=1e-9)


@pytest.mark.parametrize(
    "unit, factor", [("Hz", 1.0), ("kHz", 1e3), ("MHz", 1e6), ("GHz", 1e9), ("mhz", 1e6)]
)
def test_the_frequency_unit_of_the_option_line_scales_the_first_column(unit, factor):
    ts = read_touchstone(f"# {unit} S RI R 50\n1 0 0\n2.5 0 0\n".encode(), "x.s1p")
    assert_allclose(ts.frequency_hz, [1 * factor, 2.5 * factor], rtol=1e-15)


def test_a_reference_resistance_other_than_50_ohm_is_used():
    # S11 = 0 means a matched load: Z equals the reference resistance, here 75 Ω.
    parsed = parse_impedance_file(b"! bias: 0 V\n# Hz S RI R 75\n1 0 0\n2 0 0\n3 0 0\n", "a.s1p")
    assert_allclose(parsed.z_ohm, [75, 75, 75], rtol=1e-15)
    assert parsed.z0_ohm == 75


def test_a_bare_option_line_takes_the_defaults_and_says_so():
    # Touchstone 1.1 defaults (from memory): GHz, S, MA, R 50.
    ts = read_touchstone(b"#\n1 0.5 0\n", "a.s1p")
    assert (ts.unit, ts.parameter, ts.format, ts.z0_ohm) == ("GHz", "S", "MA", 50.0)
    assert ts.frequency_hz[0] == 1e9
    assert any("defaults" in n and "GHz" in n for n in ts.notes)


def test_option_items_may_come_in_any_order_and_any_case():
    ts = read_touchstone(b"# r 50 ri s khz\n1 0 0\n", "a.s1p")
    assert (ts.unit, ts.format, ts.z0_ohm) == ("kHz", "RI", 50.0)


def test_comments_anywhere_are_ignored_and_leading_ones_carry_metadata():
    data = (
        b"! part: TST-V1\n! unit: U9\n! bias: 3.5 V\n!freq reS11 imS11\n# MHz S RI R 50\n"
        b"1 0 0 ! first point\n! a note between points\n2 0 0\n3 0 0\n"
    )
    parsed = parse_impedance_file(data, "u9.s1p")
    assert parsed.metadata["part"] == "TST-V1" and parsed.metadata["unit"] == "U9"
    assert parsed.bias_v == 3.5
    assert parsed.lines == [6, 8, 9]
    assert parsed.metadata["kind"] == "zf"


def test_a_bias_in_millivolts_is_converted_and_a_small_forward_bias_is_kept():
    parsed = parse_impedance_file(
        b"! bias: 500 mV\n# MHz S RI R 50\n1 0 0\n2 0 0\n3 0 0\n", "a.s1p"
    )
    assert parsed.bias_v == pytest.approx(0.5, rel=1e-12)
    fwd = parse_impedance_file(b"! bias: -0.3 V\n# MHz S RI R 50\n1 0 0\n2 0 0\n3 0 0\n", "a.s1p")
    assert fwd.bias_v == pytest.approx(-0.3) and any("forward" in n for n in fwd.notes)


def test_a_file_without_a_bias_line_leaves_the_bias_open():
    parsed = parse_impedance_file(b"# MHz S RI R 50\n1 0 0\n2 0 0\n3 0 0\n", "a.s1p")
    assert parsed.bias_v is None


def test_crlf_line_ends_and_a_byte_order_mark_are_read():
    data = "\ufeff! bias: 1 V\r\n# MHz S RI R 50\r\n1 0 0\r\n2 0 0\r\n3 0 0\r\n".encode()
    assert parse_impedance_file(data, "a.S1P").frequency_hz.size == 3


def test_reflection_beyond_one_is_kept_with_a_note():
    data = b"! bias: 1 V\n# MHz S MA R 50\n1 1.01 -10\n2 0.9 -20\n3 0.8 -30\n"
    parsed = parse_impedance_file(data, "a.s1p")
    assert parsed.z_ohm[0].real < 0
    assert any("|S11| > 1" in n and "line 3" in n for n in parsed.notes)
