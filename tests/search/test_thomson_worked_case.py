"""Thomson's formula, one worked case: 10 µH with 100 pF resonates at 5.0329 MHz."""

import math

import pytest

from labdb.search.queries import TankQuery
from labdb.search.services import find_tanks
from labdb.search.tank import needed_capacitance

pytestmark = pytest.mark.django_db

# Worked by hand: √(10e-6 H · 100e-12 F) = √1e-15 s² = 3.16228e-8 s;
# f = 1/(2π · 3.16228e-8 s) = 1/1.98692e-7 s = 5.0329 MHz.
F_HAND = 5.0329e6


def test_the_capacitance_that_resonates_10_uh_at_5_0329_mhz_is_100_pf():
    assert needed_capacitance(F_HAND, 10e-6) == pytest.approx(100e-12, rel=2e-5)
    assert 1 / (2 * math.pi * math.sqrt(10e-6 * 100e-12)) == pytest.approx(F_HAND, rel=1e-5)


def test_the_finder_puts_the_band_edge_where_the_junction_gives_100_pf(stock):
    # CJO = 200 pF, VJ = 1 V, M = 0.5: C(3 V) = 200 pF/√(1 + 3) = 100 pF exactly.
    stock.lot(stock.part("TH-1"), "A", (200e-12, 1.0, 0.5, 0.0), n_units=1)
    q = TankQuery(
        inductance_h=10e-6,
        fixed_f=0.0,
        f_low_hz=F_HAND,
        f_high_hz=5.5e6,
        bias_min_v=0.0,
        bias_max_v=20.0,
    )
    cov = find_tanks(q).candidates[0].lots[0].coverage
    # f ∝ (1 + V)^(1/4) here, so a 1e-5 relative step in f moves V by ~1.6e-4 V.
    assert cov.bias_low_v == pytest.approx(3.0, abs=1e-3)
