"""Per-sweep findings: C rising with reverse bias beyond noise, poor fits, bias beyond the rating."""

import numpy as np
import pytest

from labdb.catalog.models import Unit
from labdb.physics import junction_capacitance
from labdb.quality.models import Flag
from labdb.quality.services import recompute_part

pytestmark = pytest.mark.django_db

BIAS = np.linspace(0.0, 8.0, 33)


@pytest.fixture
def lot(make_lot, clean_cjos):
    return make_lot("K1", clean_cjos(6, seed=2), noise=0.0025, seed=5)


def _unit(lot, label):
    return Unit.objects.create(lot=lot, label=label)


def test_noisy_clean_sweeps_raise_nothing(part, lot):
    # 0.25 % reading noise (a bench meter's) on a falling curve: chance rises stay in the noise.
    recompute_part(part)
    assert not Flag.objects.exists()


def test_a_bump_of_eight_per_cent_is_a_rise_beyond_noise(part, lot, add_sweep):
    c = junction_capacitance(BIAS, 50e-12, 0.8, 0.5)
    c = c * (1 + 0.0025 * np.random.default_rng(9).standard_normal(BIAS.size))
    c[20] *= 1.08  # a contact glitch
    add_sweep(_unit(lot, "UX"), 50e-12, capacitance=c, rms_rel=0.009)
    recompute_part(part)
    flag = Flag.objects.get(unit__label="UX", rule="unit_monotonic")
    (sweep,) = flag.evidence["sweeps"]
    # The largest step up is the glitch: +8 % less the curve's own fall there (about 2 % per
    # 0.25 V step at 5 V: d ln C/dV = −M/(VJ + V)), give or take the reading noise.
    assert 0.05 < sweep["max_rise"] < 0.07 and sweep["max_rise"] > sweep["rise_limit"]


def test_a_fit_residual_over_the_setting_is_a_poor_fit(settings, part, lot, add_sweep):
    settings.QUALITY_MAX_RMS_REL = 0.01
    add_sweep(_unit(lot, "UF"), 50e-12, rms_rel=0.015)
    recompute_part(part)
    flag = Flag.objects.get(unit__label="UF", rule="unit_fit")
    assert flag.evidence["limit"] == 0.01 and flag.evidence["sweeps"][0]["rms_rel"] == 0.015
    settings.QUALITY_MAX_RMS_REL = 0.02
    recompute_part(part)
    flag.refresh_from_db()
    assert not flag.active


def test_a_sweep_beyond_the_rated_reverse_voltage_is_flagged(part, lot, add_sweep):
    # The part is rated 10 V; this unit was swept to 12 V.
    add_sweep(_unit(lot, "UR"), 50e-12, bias=np.linspace(0.0, 12.0, 25))
    recompute_part(part)
    flag = Flag.objects.get(unit__label="UR", rule="unit_rating")
    assert (
        flag.evidence["rated_reverse_v"] == 10.0
        and flag.evidence["sweeps"][0]["bias_max_v"] == 12.0
    )
    assert "beyond the rated 10 V" in flag.summary
