"""seed_demo loads the invented scenario through the real import path, and is idempotent."""

import json

import pytest
from django.conf import settings
from django.core.management import call_command

from labdb.catalog.models import Lot, Part
from labdb.measurements.models import Calibration, Fit, Sweep

pytestmark = pytest.mark.django_db


@pytest.fixture
def catalog():
    return json.loads((settings.BASE_DIR / "fixtures/demo/catalog.json").read_text())


def test_it_imports_every_demo_file_and_a_second_run_adds_nothing(catalog, capsys):
    call_command("seed_demo", "--no-users")
    files = list((settings.BASE_DIR / "fixtures/demo/sweeps").rglob("*.csv"))
    # the bench files; impedance sweeps and C–V derived from them are checked in tests/impedance
    bench = Sweep.objects.filter(kind__in=["cv", "fv"], derived_from__isnull=True)
    assert bench.count() == len(files)
    assert Part.objects.count() == len(catalog["parts"])
    assert Lot.objects.count() == len(catalog["lots"])
    assert Calibration.objects.count() == len(catalog["calibrations"])
    assert Fit.objects.filter(sweep__in=bench).count() == len(files)
    total = Sweep.objects.count()
    call_command("seed_demo", "--no-users")
    assert Sweep.objects.count() == total
    assert f"0 stored, {len(files)} already there" in capsys.readouterr().out


def test_demo_fits_reproduce_the_generating_curves():
    """truth.json holds the invented parameters each file was generated from.

    Individual parameters of a 0–5 V LED sweep are correlated, so the check is on the
    curve: the stored fit's C(V) against the generating C(V) over the measured range,
    within a few times the files' stated noise (meter 0.25 % per point).
    """
    import numpy as np

    from labdb.physics import capacitance_of, junction_capacitance

    call_command("seed_demo", "--no-users")
    truth = json.loads((settings.BASE_DIR / "fixtures/demo/truth.json").read_text())
    checked = 0
    for t in truth["sweeps"]:
        if t["kind"] != "cv" or t["illumination"] != "dark":
            continue
        sweep = Sweep.objects.get(raw_name=t["file"].removeprefix("sweeps/"))
        v = np.linspace(sweep.bias_min_v, sweep.bias_max_v, 21)
        expected = junction_capacitance(v, t["cjo_f"], t["vj_v"], t["m"], t["cp_f"])
        got = capacitance_of(sweep.current_fit.params, v)
        np.testing.assert_allclose(got, expected, rtol=0.006, err_msg=t["file"])
        checked += 1
    assert checked >= 100


def test_it_creates_demo_users_and_prints_the_login(capsys):
    call_command("seed_demo")
    out = capsys.readouterr().out
    assert "demo login: user 'demo' (curator)" in out
    from django.contrib.auth import get_user_model

    user = get_user_model().objects.get(username="demo")
    assert user.groups.filter(name="curator").exists()
