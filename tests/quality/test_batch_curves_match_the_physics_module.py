"""The vectorised curve evaluation used for whole lots gives physics.junction_capacitance's values."""

import numpy as np
from numpy.testing import assert_allclose

from labdb.physics import junction_capacitance, junction_capacitance_many
from labdb.quality.services.curves import rise_checks, rise_limit


def test_many_models_at_once_equal_one_at_a_time():
    rng = np.random.default_rng(11)
    b = 20
    cjo = rng.uniform(5e-12, 200e-12, b)
    vj = rng.uniform(0.4, 3.0, b)
    m = rng.uniform(0.2, 1.5, b)
    cp = rng.uniform(0.0, 2e-12, b)
    bias = np.linspace(-1.0, 20.0, 50)  # forward bias too: SPICE's linear extension
    many = junction_capacitance_many(bias, cjo, vj, m, cp)
    # physics.junction_capacitance (checked against ngspice in tests/reference) is the reference.
    one = np.array([junction_capacitance(bias, *p) for p in zip(cjo, vj, m, cp, strict=True)])
    assert_allclose(many, one, rtol=1e-13, atol=0)


def test_the_rise_check_finds_the_step_up_and_the_noise():
    bias = np.linspace(0.0, 5.0, 41)
    clean = junction_capacitance(bias, 30e-12, 1.8, 0.4)
    c = clean.copy()
    c[26] *= 1.03  # one reading 3 % high
    # Given in falling-bias order: the check sorts by bias first.
    rise, noise = rise_checks([bias[::-1]], [c[::-1]], np.array([[30e-12, 1.8, 0.4, 0.0]]))
    # The step from point 25 to 26 is 1.03·C26/C25 − 1 of the clean curve (closed form).
    assert_allclose(rise[0], 1.03 * clean[26] / clean[25] - 1.0, rtol=1e-12)
    # Residuals are 0 except one point: the median |r| is 0, so the floor sets the limit.
    assert noise[0] == 0.0 and rise_limit(noise[0]) == 0.002
