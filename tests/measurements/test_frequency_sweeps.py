"""Oscillator sweeps are converted with the calibration in force at the measurement time."""

import math

import numpy as np
import pytest

from labdb.measurements.models import Sweep
from labdb.measurements.services import record_file
from labdb.physics import junction_capacitance

pytestmark = pytest.mark.django_db


def fv_csv(bench, when="2026-02-01T10:00:00+00:00", cjo=30e-12, vj=0.9, m=0.45):
    v = np.linspace(0, 9, 31)
    cj = junction_capacitance(v, cjo, vj, m)
    # Thomson's formula with the bench fixture's true L and stray capacitance.
    f = 1 / (2 * math.pi * np.sqrt(bench.inductance_h * (bench.stray_f + cj)))
    head = (
        "# part: TST-V1\n# lot: L1\n# unit: U2\n# fixture: osc A\n"
        f"# measured at: {when}\nbias (V),f (MHz)\n"
    )
    return (head + "".join(f"{a:.4f},{b / 1e6:.9f}\n" for a, b in zip(v, f, strict=True))).encode()


def test_a_frequency_sweep_becomes_capacitance_and_is_fitted(bench):
    (out,) = record_file(fv_csv(bench), "osc.csv")
    assert out.status == "stored", out.problems
    sweep = Sweep.objects.get(pk=out.sweep.pk)
    assert sweep.kind == "fv" and sweep.calibration_id == bench.cal.pk
    c = np.asarray(sweep.points["capacitance_f"])
    expected = junction_capacitance(np.asarray(sweep.points["bias_v"]), 30e-12, 0.9, 0.45)
    np.testing.assert_allclose(c, expected, rtol=1e-5)
    assert sweep.current_fit.cjo == pytest.approx(30e-12, rel=1e-3)


def test_it_refuses_a_sweep_measured_before_any_calibration(bench):
    (out,) = record_file(fv_csv(bench, when="2025-06-01T00:00:00+00:00"), "early.csv")
    assert out.status == "rejected"
    assert "no calibration before 2025-06-01" in str(out.problems[0])
    assert Sweep.objects.count() == 0


def test_a_frequency_at_or_above_the_open_fixture_is_an_error_not_zero(bench):
    open_f = 1 / (2 * math.pi * math.sqrt(bench.inductance_h * bench.stray_f))
    data = fv_csv(bench).decode().splitlines()
    data[-1] = f"9.0000,{open_f * 1.001 / 1e6:.9f}"
    (out,) = record_file(("\n".join(data) + "\n").encode(), "over.csv")
    assert out.status == "rejected"
    assert Sweep.objects.count() == 0


def test_a_frequency_sweep_on_a_meter_fixture_is_refused(bench):
    data = fv_csv(bench).replace(b"osc A", b"meter A")
    (out,) = record_file(data, "wrong.csv")
    assert out.status == "rejected"
    assert "oscillator" in str(out.problems[0])
