"""Impedance sweeps as text tables: every accepted pair of columns gives the same Z.

The equivalent-circuit relations are the usual LCR-meter ones (series: D = ωCs·Rs, Q = 1/D;
parallel: Y = G + jωCp, D = G/(ωCp), G = 1/Rp), written out independently below; the test
impedance is a series 0.5 Ω, 1.5 nH, 50 pF (invented) at three frequencies.
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.ingest.errors import ParseError
from labdb.ingest.impedance import is_impedance_file, parse_impedance_file

F = np.array([1e6, 10e6, 100e6])
W = 2 * np.pi * F
Z = 0.5 + 1j * (W * 1.5e-9 - 1 / (W * 50e-12))
CS = -1 / (W * Z.imag)
Y = 1 / Z
CP, G = Y.imag / W, Y.real


def _table(header: str, cols: list[np.ndarray], meta: str = "# bias: 4 V\n") -> bytes:
    rows = "".join(",".join(repr(float(c[i])) for c in cols) + "\n" for i in range(F.size))
    return (meta + header + "\n" + rows).encode()


LAYOUTS = {
    "|Z| and phase (deg)": ("f (Hz),|Z| (ohm),phase (deg)", [F, abs(Z), np.degrees(np.angle(Z))]),
    "|Z| and phase (rad)": ("f (Hz),|Z| (ohm),theta (rad)", [F, abs(Z), np.angle(Z)]),
    "R and X": ("freq (MHz),R (ohm),X (ohm)", [F / 1e6, Z.real, Z.imag]),
    "Cs and Rs": ("f (kHz),Cs (pF),Rs (mohm)", [F / 1e3, CS * 1e12, Z.real * 1e3]),
    "Cs and D": ("f (Hz),Cs (F),D", [F, CS, W * CS * Z.real]),
    "Cs and Q": ("f (Hz),Cs (nF),Q", [F, CS * 1e9, 1 / (W * CS * Z.real)]),
    "Cp and G": ("f (Hz),Cp (pF),G (uS)", [F, CP * 1e12, G * 1e6]),
    "Cp and Rp": ("f (Hz),Cp (pF),Rp (kohm)", [F, CP * 1e12, 1 / G / 1e3]),
    "Cp and D": ("f (Hz),Cp (pF),D", [F, CP * 1e12, G / (W * CP)]),
    "Cp and Q": ("f (Hz),Cp (pF),Q", [F, CP * 1e12, W * CP / G]),
    "C and ESR": ("f (Hz),C (pF),ESR (ohm)", [F, CS * 1e12, Z.real]),
    "C and G": ("f (Hz),C (pF),G (S)", [F, CP * 1e12, G]),
}


@pytest.mark.parametrize("layout", LAYOUTS)
def test_every_column_pair_gives_the_same_impedance(layout):
    header, cols = LAYOUTS[layout]
    data = _table(header, cols)
    assert is_impedance_file(data, "z.csv")
    parsed = parse_impedance_file(data, "z.csv")
    assert_allclose(parsed.frequency_hz, F, rtol=1e-12)
    assert_allclose(parsed.z_ohm, Z, rtol=1e-9)
    assert parsed.bias_v == 4.0


def test_a_semicolon_file_with_decimal_commas_is_read():
    rows = "".join(
        f"{f:.0f};{z.real:.6f};{z.imag:.6f}\n".replace(".", ",") for f, z in zip(F, Z, strict=True)
    )
    data = ("# bias: 1,5 V\nf [Hz];R [ohm];X [ohm]\n" + rows).encode()
    parsed = parse_impedance_file(data, "z.csv")
    assert parsed.bias_v == 1.5
    assert_allclose(parsed.z_ohm, Z, rtol=1e-6)


def test_a_falling_sweep_is_turned_round_with_a_note():
    header, cols = LAYOUTS["R and X"]
    parsed = parse_impedance_file(_table(header, [c[::-1] for c in cols]), "z.csv")
    assert_allclose(parsed.frequency_hz, F, rtol=1e-12)
    assert_allclose(parsed.z_ohm, Z, rtol=1e-9)
    assert any("turned round" in n for n in parsed.notes)
    assert parsed.lines == [5, 4, 3]


def test_a_frequency_that_changes_direction_is_refused_at_its_line():
    data = b"# bias: 1 V\nf (MHz),R (ohm),X (ohm)\n1,1,-1\n3,1,-1\n2,1,-1\n"
    with pytest.raises(ParseError) as err:
        parse_impedance_file(data, "z.csv")
    issue = err.value.issues[0]
    assert (issue.line, issue.column) == (5, "f (MHz)")
    assert "line 4" in issue.message


def test_a_plain_c_beside_d_is_refused_as_ambiguous():
    data = b"# bias: 1 V\nf (MHz),C (pF),D\n1,50,0.01\n2,50,0.01\n3,50,0.01\n"
    with pytest.raises(ParseError, match="'Cs' \\(series\\) or 'Cp' \\(parallel\\)"):
        parse_impedance_file(data, "z.csv")


def test_a_capacitance_without_a_loss_column_is_refused_with_the_choices():
    data = b"# bias: 1 V\nf (MHz),Cs (pF)\n1,50\n2,50\n3,50\n"
    with pytest.raises(ParseError, match="no impedance pair") as err:
        parse_impedance_file(data, "z.csv")
    assert err.value.issues[0].line == 2


def test_a_wrong_unit_on_a_column_is_located():
    data = b"# bias: 1 V\nf (MHz),R (pF),X (ohm)\n1,1,-1\n2,1,-1\n3,1,-1\n"
    with pytest.raises(ParseError) as err:
        parse_impedance_file(data, "z.csv")
    assert err.value.issues[0].column == "R (pF)"


def test_a_bad_cell_is_located():
    data = b"# bias: 1 V\nf (MHz),R (ohm),X (ohm)\n1,1,-1\n2,one,-1\n3,1,-1\n"
    with pytest.raises(ParseError) as err:
        parse_impedance_file(data, "z.csv")
    assert (err.value.issues[0].line, err.value.issues[0].column) == (4, "R (ohm)")


def test_a_bias_far_into_forward_conduction_is_refused_at_its_line():
    data = b"# part: P\n# bias: -5 V\nf (MHz),R (ohm),X (ohm)\n1,1,-1\n2,1,-1\n3,1,-1\n"
    with pytest.raises(ParseError, match="reverse bias is written positive") as err:
        parse_impedance_file(data, "z.csv")
    assert err.value.issues[0].line == 2


def test_kind_zf_in_the_metadata_is_accepted_and_cv_is_refused():
    ok = b"# kind: zf\n# bias: 1 V\nf (MHz),R (ohm),X (ohm)\n1,1,-1\n2,1,-1\n3,1,-1\n"
    assert parse_impedance_file(ok, "z.csv").metadata["kind"] == "zf"
    bad = ok.replace(b"kind: zf", b"kind: cv")
    with pytest.raises(ParseError, match="kind 'cv'"):
        parse_impedance_file(bad, "z.csv")


def test_bias_sweeps_are_not_taken_for_impedance_sweeps(make_cv):
    assert not is_impedance_file(make_cv(), "cv.csv")
    fv = b"bias (V),f (MHz)\n0,10\n1,11\n2,12\n"
    assert not is_impedance_file(fv, "fv.csv")
    assert not is_impedance_file(b"PK\x03\x04junk", "a.zip")
    assert is_impedance_file(b"anything", "a.s1p") and is_impedance_file(b"", "b.S2P")
    # workbooks are bias sweeps (an impedance table is given as text), never read twice
    from pathlib import Path

    book = Path(__file__).resolve().parents[1] / "ingest" / "samples" / "workbook.xlsx"
    assert not is_impedance_file(book.read_bytes(), "workbook.xlsx")
