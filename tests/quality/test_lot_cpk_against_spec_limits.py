"""Cpk per lot against the part's spec limits, checked on a hand-worked example."""

import math

import pytest
from numpy.testing import assert_allclose

from labdb.quality.models import Flag, LotSummary
from labdb.quality.services import recompute_part

pytestmark = pytest.mark.django_db

# C at 4 V of the model CJO·(1 + 4/0.8)^(−0.5) is CJO/√6, so these CJOs give C(4 V) of
# exactly 10, 11, 12, 13 and 14 pF.
C_SPEC_PF = [10.0, 11.0, 12.0, 13.0, 14.0]


@pytest.fixture
def lot(part, make_lot):
    part.spec_bias_v, part.spec_c_min_f, part.spec_c_max_f = 4.0, 8e-12, 20e-12
    part.save()
    lot = make_lot("S1", [c * 1e-12 * math.sqrt(6.0) for c in C_SPEC_PF], vj=0.8, m=0.5)
    recompute_part(part)
    return lot


def test_cpk_is_the_textbook_value(lot):
    # Montgomery: Cpk = min(USL − μ, μ − LSL)/(3σ). By hand: μ = 12 pF, σ = √(10/4) = 1.5811 pF
    # (n − 1 = 4), Cpu = 8/4.7434 = 1.6865, Cpl = 4/4.7434 = 0.84327, Cpk = 0.84327.
    cap = LotSummary.objects.get(lot=lot).figures["cpk"]["c_spec"]
    assert_allclose(cap["mean"], 12e-12, rtol=1e-9)
    assert_allclose(cap["sigma"], 1.5811388e-12, rtol=1e-7)
    assert_allclose(cap["cpu"], 1.6865481, rtol=1e-7)
    assert_allclose(cap["cpl"], 0.8432740, rtol=1e-7)
    assert_allclose(cap["cpk"], 0.8432740, rtol=1e-7)


def test_a_lot_below_the_target_cpk_is_flagged(lot):
    flag = Flag.objects.get(lot=lot, unit=None, rule="lot_cpk", figure="c_spec")
    assert flag.active and flag.evidence["target"] == 1.33


def test_units_outside_the_spec_are_flagged_one_by_one(part, lot):
    part.spec_c_max_f = 13.5e-12
    part.save()
    recompute_part(part)
    out = Flag.objects.filter(lot=lot, rule="unit_spec", active=True)
    assert list(out.values_list("unit__label", "figure")) == [("U05", "c_spec")]


def test_a_lower_cpk_target_setting_clears_the_flag(settings, part, lot):
    settings.QUALITY_MIN_CPK = 0.8
    recompute_part(part)
    assert not Flag.objects.get(lot=lot, rule="lot_cpk").active
