"""ΔC/C of the same unit lit against dark, and its temperature coefficient, per unit and per lot."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.catalog.models import Unit
from labdb.quality.models import LotSummary
from labdb.quality.services import condition_effects, recompute_part, temperature_coefficient

pytestmark = pytest.mark.django_db

BIAS = np.linspace(0.0, 5.0, 21)
TC = 350e-6  # invented coefficient of CJO [1/°C]


@pytest.fixture
def lot(part, make_lot, add_sweep):
    lot = make_lot("C1", [40e-12, 41e-12, 42e-12, 43e-12, 44e-12], bias=BIAS)
    for k, unit in enumerate(Unit.objects.filter(lot=lot).order_by("label")[:2]):
        cjo = 40e-12 + k * 1e-12
        # Lit: 4 % more at every bias (C ∝ CJO with VJ and M fixed), easy to check.
        add_sweep(unit, cjo * 1.04, bias=BIAS, illumination="illuminated")
        # 45 °C: CJO grows by TC per °C over 20 °C.
        add_sweep(unit, cjo * (1 + TC * 20), bias=BIAS, temperature_c=45.0)
    recompute_part(part)
    return lot


def test_light_effect_is_the_ratio_of_lit_to_dark_curves(lot):
    (entry,) = condition_effects(LotSummary.objects.filter(lot=lot))["light"]
    assert [u["label"] for u in entry["units"]] == ["U01", "U02"]
    assert entry["illum"] == "illuminated" and entry["band"] == 25.0
    assert_allclose([entry["grid_v"][0], entry["grid_v"][-1]], [0.0, 5.0])
    for u in entry["units"]:
        assert_allclose(u["dcc"], 0.04, rtol=1e-9)  # C_lit/C_dark − 1 = 1.04 − 1
    assert_allclose(entry["lot_median"], 0.04, rtol=1e-9)


def test_temperature_coefficient_of_cjo_is_recovered(lot):
    (entry,) = condition_effects(LotSummary.objects.filter(lot=lot))["temperature"]
    # C ∝ CJO at every bias (VJ, M fixed), so (C45 − C25)/(C25·20 °C) = TC exactly.
    for u in entry["units"]:
        assert u["temperatures_c"] == [25.0, 45.0]
        assert_allclose(u["tc_ppm"], TC * 1e6, rtol=1e-9)
    assert_allclose(entry["lot_median"], TC * 1e6, rtol=1e-9)


def test_least_squares_over_three_temperatures():
    # Textbook least squares by hand: T = 0, 25, 50 °C, C = 100, 101, 103 pF →
    # slope = Σ(ΔT·ΔC)/ΣΔT² = (−25·−1.333 + 25·1.667)/1250 = 0.06 pF/°C; line at 0 °C:
    # 101.333 − 0.06·25 = 99.833 pF; TC = 0.06/99.833·1e6 = 601.0 ppm/°C.
    t = np.array([0.0, 25.0, 50.0])
    c = np.array([[100e-12], [101e-12], [103e-12]])
    assert_allclose(temperature_coefficient(t, c), [0.06 / 99.8333333 * 1e6], rtol=1e-8)
