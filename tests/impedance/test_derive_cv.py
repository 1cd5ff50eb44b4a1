"""A unit's bias series of impedance sweeps becomes a stored, fitted, linked C–V sweep.

Files are written from a junction Cs(V) = CJO·(1 + V/VJ)^(−M) (SPICE depletion form) in series
with 0.5 Ω and 1.5 nH; invented values.
"""

import json
import math

import pytest

from labdb.catalog.models import Unit
from labdb.measurements.errors import Rejected
from labdb.measurements.models import Sweep
from labdb.measurements.services import record_file
from labdb.measurements.services.bias_series import (
    derive_cv_from_bias_series,
    derived_sweeps,
    q_at_frequency,
)

pytestmark = pytest.mark.django_db

CJO, VJ, M = 40e-12, 0.7, 0.5
BIASES = (0.0, 1.0, 2.0, 5.0, 10.0)


def _cs(v):
    return CJO * (1 + v / VJ) ** (-M)


@pytest.fixture
def series(analyser, make_s1p):
    for v in BIASES:
        (out,) = record_file(make_s1p(cs=_cs(v), bias=f"{v:g} V", n=101), f"u1_{v:g}V.s1p")
        assert out.status == "stored", out.problems
    return Unit.objects.get(label="U1")


def test_the_derived_sweep_is_a_fitted_c_v_linked_to_its_sources(series, member):
    (out,) = derive_cv_from_bias_series(series, frequency_hz=1e6, user=member)
    assert out.status == "stored", out.problems
    cv = Sweep.objects.get(pk=out.sweep.pk)
    assert cv.kind == "cv" and cv.test_frequency_hz == 1e6 and cv.uploaded_by == member
    sources = list(cv.derived_from.order_by("bias_min_v"))
    assert [s.bias_min_v for s in sources] == list(BIASES)
    assert cv.points["bias_v"] == list(BIASES)
    # at 1 MHz, Ceff = Cs/(1 − ω²LsCs) differs from Cs by < 1e-5: the junction comes back
    assert cv.points["capacitance_f"][0] == pytest.approx(CJO, rel=1e-5)
    fit = cv.current_fit
    assert fit.version == 1 and fit.created_by == member
    assert fit.cjo == pytest.approx(CJO, rel=1e-4) and fit.m == pytest.approx(M, rel=1e-3)
    w = 2 * math.pi * 1e6
    want_q = [abs(w * 1.5e-9 - 1 / (w * _cs(v))) / 0.5 for v in BIASES]
    assert cv.points["extras"]["q"] == pytest.approx(want_q, rel=1e-6)
    raw = json.loads(cv.raw_file.open("rb").read())
    assert raw["derived_from"] == [s.pk for s in sources]
    assert raw["capacitance_f"] == cv.points["capacitance_f"]


def test_deriving_the_same_series_twice_finds_the_stored_sweep(series):
    derive_cv_from_bias_series(series, frequency_hz=1e6)
    (again,) = derive_cv_from_bias_series(series, frequency_hz=1e6)
    assert again.status == "duplicate"
    assert Sweep.objects.filter(kind="cv").count() == 1


def test_the_default_frequency_stays_well_below_resonance(series):
    (out,) = derive_cv_from_bias_series(series)
    srf0 = 1 / (2 * math.pi * math.sqrt(1.5e-9 * CJO))  # lowest SRF (largest C)
    assert out.sweep.test_frequency_hz <= srf0 / 10
    assert out.sweep.test_frequency_hz == pytest.approx(50e6)  # 65 MHz rounded down to 1-2-5


def test_a_new_sweep_in_the_series_gives_a_new_derivation_and_archives_the_old(series, make_s1p):
    (first,) = derive_cv_from_bias_series(series, frequency_hz=1e6)
    record_file(make_s1p(cs=_cs(15.0), bias="15 V", n=101), "u1_15V.s1p")
    (second,) = derive_cv_from_bias_series(series, frequency_hz=1e6)
    assert second.status == "stored" and second.sweep.n_points == 6
    first.sweep.refresh_from_db()
    assert first.sweep.archived and list(derived_sweeps(series)) == [second.sweep]


def test_too_few_biases_are_refused_and_nothing_is_stored(analyser, make_s1p):
    for v in (0.0, 1.0):
        record_file(make_s1p(cs=_cs(v), bias=f"{v:g} V", n=51), f"u1_{v:g}V.s1p")
    with pytest.raises(Rejected, match="at least 3"):
        derive_cv_from_bias_series(Unit.objects.get(label="U1"))
    assert not Sweep.objects.filter(kind="cv").exists()


def test_a_frequency_above_resonance_is_refused_and_nothing_is_stored(series):
    (out,) = derive_cv_from_bias_series(series, frequency_hz=900e6)
    assert out.status == "rejected" and "self-resonance" in out.problems[0].message
    assert not Sweep.objects.filter(kind="cv").exists()


def test_q_at_a_band_centre_comes_from_the_newest_fits(series):
    got = q_at_frequency(series, 10e6)
    w = 2 * math.pi * 10e6
    assert got["bias_v"] == list(BIASES)
    assert got["q"] == pytest.approx(
        [abs(w * 1.5e-9 - 1 / (w * _cs(v))) / 0.5 for v in BIASES], rel=1e-6
    )
    assert q_at_frequency(series, 5e9) is None  # beyond the measured range
