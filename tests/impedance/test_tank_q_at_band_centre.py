"""The tank finder shows Q at the band centre for lots with impedance-measured units.

Files are series R–L–C one-ports with Rs = 0.5 Ω, Ls = 1.5 nH and Cs from the junction
form; the expected Q of a series R–L–C is |X|/R with X = ωLs − 1/(ωCs) (textbook series
resonance, hand-written here).
"""

import math

import pytest

from labdb.search.tank_q import lot_q_at

pytestmark = pytest.mark.django_db

RS, LS = 0.5, 1.5e-9


def _cs(v):
    return 40e-12 * (1 + v / 0.7) ** (-0.5)


def _q(f, cs):
    w = 2 * math.pi * f
    return abs(w * LS - 1 / (w * cs)) / RS


def test_lot_q_spans_the_measured_biases_and_names_the_lossiest_unit(analyser, make_s1p):
    from labdb.measurements.services import record_file

    for label, scale in (("U1", 1.0), ("U2", 1.1)):
        for v in (0.0, 2.0, 10.0):
            data = make_s1p(rs=RS, ls=LS, cs=_cs(v) * scale, bias=f"{v:g} V", unit=label, n=101)
            (out,) = record_file(data, f"{label}_{v:g}.s1p")
            assert out.status == "stored", out.problems
    f = 30e6
    got = lot_q_at([analyser.lot.pk], f)[analyser.lot.pk]
    expected = [_q(f, _cs(v) * s) for s in (1.0, 1.1) for v in (0.0, 2.0, 10.0)]
    assert got.q_min == pytest.approx(min(expected), rel=1e-6)
    assert got.q_max == pytest.approx(max(expected), rel=1e-6)
    # Larger Cs means smaller |X| below resonance, so U2 is the lossier unit.
    assert got.unit == "U2" and got.n_units == 2
    assert (got.bias_min_v, got.bias_max_v) == (0.0, 10.0)


def test_a_lot_without_impedance_data_has_no_q(bench):
    assert lot_q_at([bench.lot.pk], 30e6) == {}
