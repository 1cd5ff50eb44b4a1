"""Tank resonance with a biased junction against an ngspice AC analysis.

Recipe from REFERENCES.md: 10 µH ∥ 100 pF ∥ 10 kΩ driven by a 1 A AC current source; the
diode reaches the tank through 1 µF and is biased through 10 MΩ from a DC source (GMIN's drop
across it stays ~1e-5 of the bias). The input admittance is Y = 1/V(t); resonance is where
Im(Y) = ωC − 1/(ωL) crosses zero, found in Python from a fine AC sweep.
"""

import shutil

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics.tuning import tank_frequency

pytestmark = [
    pytest.mark.ngspice,
    pytest.mark.skipif(
        shutil.which("ngspice") is None,
        reason="ngspice is not installed (apt-get install ngspice): SPICE reference skipped",
    ),
]

L_TANK, C_TANK, C_BLOCK = 10e-6, 100e-12, 1e-6
DIODE = {"cjo": 20e-12, "vj": 0.7, "m": 0.45}
BIASES = [0.0, 0.5, 2.0, 9.0]
GMIN_S, R_BIAS = 1e-12, 10e6  # ngspice default GMIN [S]; bias resistor [Ω]


def tank_netlist(biases, setup: str) -> str:
    # One fine sweep (±0.2 %, 41 points) around each expected resonance.
    f_guess = tank_frequency(biases, DIODE, L_TANK, C_TANK, C_BLOCK)
    runs = "\n".join(
        f"alter vb dc = {v!r}\nac lin 41 {f * 0.998!r} {f * 1.002!r}\n"
        "let yi = imag(1/v(t))\nwrdata out.txt yi"
        for v, f in zip(map(float, biases), map(float, f_guess), strict=True)
    )
    return f"""* parallel LC tank loaded by a biased junction
i1 0 t DC 0 AC 1
l1 t 0 {L_TANK!r}
c1 t 0 {C_TANK!r}
r1 t 0 10k
cb t k {C_BLOCK!r}
d1 0 k dm
rb k b {R_BIAS!r}
vb b 0 DC 0
.model dm D(CJO={DIODE["cjo"]!r} VJ={DIODE["vj"]!r} M={DIODE["m"]!r} FC=0.5)
.temp 27
.control
{setup}
{runs}
quit
.endc
.end
"""


def resonance(block) -> float:
    """Zero of Im(Y) [Hz]: ω·Im(Y) = ω²·C − 1/L is a straight line in ω², fitted near it."""
    f, yi = block["frequency"], block["yi"]
    k = int(np.flatnonzero(np.diff(np.sign(yi)) > 0)[0])
    near = slice(k - 1, k + 3)
    x, y = (f[near] / f[k]) ** 2, f[near] * yi[near]
    slope, intercept = np.polyfit(x, y, 1)
    return float(f[k] * np.sqrt(-intercept / slope))


def test_tank_resonance_matches_tank_frequency(ngspice, wrdata_setup):
    blocks = ngspice(tank_netlist(BIASES, wrdata_setup))
    assert len(blocks) == len(BIASES)
    f_spice = np.array([resonance(b) for b in blocks])
    expected = tank_frequency(BIASES, DIODE, L_TANK, C_TANK, C_BLOCK)
    # Measured with ngspice 39: worst relative difference 1.6e-7 (REFERENCES.md: ~1e-7).
    assert_allclose(f_spice, expected, rtol=1e-6)
    # Most of that is GMIN (1e-12 S across the diode) dividing the bias with RB = 10 MΩ:
    # the diode sees V/(1 + GMIN·RB). With that divider the measured worst is 2.5e-9.
    v_diode = np.array(BIASES) / (1.0 + GMIN_S * R_BIAS)
    assert_allclose(f_spice, tank_frequency(v_diode, DIODE, L_TANK, C_TANK, C_BLOCK), rtol=1e-8)
    # And the junction must actually tune the tank across these biases.
    assert np.all(np.diff(f_spice) > 0)
