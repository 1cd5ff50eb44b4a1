"""Junction capacitance against ngspice's diode model and a behavioural capacitor.

Recipe from REFERENCES.md: the cathode driven by `DC <VR> AC 1`, anode grounded, `alter`
steps the bias, one AC point at 1 MHz, C = Im(−i(v1))/(2π·f), written by wrdata at 15 digits;
`.temp 27` equals TNOM so CJO and VJ are not temperature-scaled.
"""

import shutil

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.junction import junction_capacitance

pytestmark = [
    pytest.mark.ngspice,
    pytest.mark.skipif(
        shutil.which("ngspice") is None,
        reason="ngspice is not installed (apt-get install ngspice): SPICE reference skipped",
    ),
]

# Measured with ngspice 39 (max |C_spice/C − 1| over these netlists): worst relative
# difference 6.7e-16 for the diode cards, 3.3e-16 for the behavioural capacitor. 1e-12
# leaves room for other builds and still catches any modelling slip.
RTOL = 1e-12


def cv_netlist(element_lines: str, biases, setup: str) -> str:
    steps = " ".join(repr(float(v)) for v in biases)
    return f"""* small-signal C(V) of one element
v1 k 0 DC 0 AC 1
{element_lines}
.temp 27
.control
{setup}
foreach vr {steps}
  alter v1 dc = $vr
  ac lin 1 1meg 1meg
  let y = -i(v1)
  let c = imag(y)/(2*pi*real(frequency))
  let vb = real(frequency)*0 + $vr
  wrdata out.txt vb c
end
quit
.endc
.end
"""


def sweep(blocks):
    return np.array([b["vb"][0] for b in blocks]), np.array([b["c"][0] for b in blocks])


@pytest.mark.parametrize(
    "cjo, vj, m, fc",
    [(10e-12, 0.7, 0.45, 0.5), (150e-12, 1.9, 0.33, 0.5), (33e-12, 0.6, 0.9, 0.9)],
)
def test_spice_diode_model_matches_junction_capacitance(ngspice, wrdata_setup, cjo, vj, m, fc):
    # Reverse biases 0–30 V, plus one forward point beyond FC·VJ (SPICE linear extension).
    forward = -(fc * vj + 0.1)
    biases = [0.0, 0.5, 1.0, 3.0, 9.0, 15.0, 30.0, forward]
    element = f"d1 0 k dm\n.model dm D(CJO={cjo!r} VJ={vj!r} M={m!r} FC={fc!r})"
    v, c = sweep(ngspice(cv_netlist(element, biases, wrdata_setup)))
    assert_allclose(v, biases, rtol=0, atol=1e-15)
    assert_allclose(c, junction_capacitance(v, cjo, vj, m, fc=fc), rtol=RTOL)


def test_hyperabrupt_behavioural_capacitor_matches(ngspice, wrdata_setup):
    # ngspice clamps the diode's M to 0.9, so M = 1.5 goes through a behavioural capacitor
    # C(V) = CJO/(1 + V/VJ)^M (REFERENCES.md).
    biases = [0.0, 0.3, 1.0, 2.5, 6.0, 12.0, 30.0]
    element = "c1 k 0 C='100p/(1+V(k)/1.2)^1.5'"
    v, c = sweep(ngspice(cv_netlist(element, biases, wrdata_setup)))
    assert_allclose(c, junction_capacitance(v, 100e-12, 1.2, 1.5), rtol=RTOL)
