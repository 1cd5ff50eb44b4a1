"""The series R–L–C fit against ngspice: AC analysis of a series R–L–C, Z from the source current.

Recipe (REFERENCES.md, as for the junction checks): a voltage source `DC 0 AC 1` drives the
chain R–L–C to ground; ngspice's AC analysis gives the branch current, Z = V/I = 1/(−i(v1)),
written by wrdata at 15 digits. The fitted Cs, Rs, Ls must be the netlist's values.
"""

import math
import shutil

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.impedance import fit_series_rlc

pytestmark = [
    pytest.mark.ngspice,
    pytest.mark.skipif(
        shutil.which("ngspice") is None,
        reason="ngspice is not installed (apt-get install ngspice): SPICE reference skipped",
    ),
]


def rlc_netlist(rs: float, ls: float, cs: float, setup: str) -> str:
    return f"""* series R-L-C driven by an AC voltage source
v1 1 0 DC 0 AC 1
r1 1 2 {rs!r}
l1 2 3 {ls!r}
c1 3 0 {cs!r}
.control
{setup}
ac dec 50 100k 1g
let z = 1/(-i(v1))
let fr = real(frequency)
let zr = real(z)
let zi = imag(z)
wrdata out.txt fr zr zi
quit
.endc
.end
"""


# Invented values: a small varactor (0.5 Ω, 1.5 nH, 50 pF), a larger junction, a lossy one.
CASES = [(0.5, 1.5e-9, 50e-12), (0.12, 0.8e-9, 220e-12), (4.7, 2.2e-9, 6.8e-12)]


@pytest.mark.parametrize("rs, ls, cs", CASES)
def test_fitted_equivalent_matches_the_simulated_circuit(ngspice, wrdata_setup, rs, ls, cs):
    (block,) = ngspice(rlc_netlist(rs, ls, cs, wrdata_setup))
    f, z = block["fr"], block["zr"] + 1j * block["zi"]
    assert f.size == 201 and f[0] == pytest.approx(1e5) and f[-1] == pytest.approx(1e9)
    fit = fit_series_rlc(f, z)
    # Measured with ngspice 39: worst relative difference 3e-16 (Rs), 2e-15 (Ls), 2e-15 (Cs)
    # and RMS relative misfit 1.7e-12 over these cases. 1e-9 leaves room for other builds
    # and still catches any slip in the model or its fit.
    assert_allclose(fit.rs_ohm, rs, rtol=1e-9)
    assert_allclose(fit.ls_h, ls, rtol=1e-9)
    assert_allclose(fit.cs_f, cs, rtol=1e-9)
    assert_allclose(fit.srf_hz, 1 / (2 * math.pi * math.sqrt(ls * cs)), rtol=1e-9)
    assert fit.rms_rel < 1e-9


def test_the_simulated_impedance_crosses_zero_reactance_at_the_fitted_srf(ngspice, wrdata_setup):
    rs, ls, cs = CASES[0]
    (block,) = ngspice(rlc_netlist(rs, ls, cs, wrdata_setup))
    f, x = block["fr"], block["zi"]
    i = int(np.flatnonzero(np.diff(np.sign(x)) > 0)[0])
    # X changes sign between two grid points; interpolate in log f
    lf = np.interp(0.0, x[i : i + 2], np.log(f[i : i + 2]))
    fit = fit_series_rlc(f, block["zr"] + 1j * x)
    # 50 points a decade: linear interpolation of X in log f was 1.6e-6 off with ngspice 39
    assert math.exp(lf) == pytest.approx(fit.srf_hz, rel=1e-5)
