"""Recording a file: raw bytes kept, points stored, fit version 1 written — or nothing."""

import hashlib
from pathlib import Path

import numpy as np
import pytest
from django.conf import settings

from labdb.catalog.models import Unit
from labdb.measurements.models import Fit, Sweep
from labdb.measurements.services import SweepContext, record_file

pytestmark = pytest.mark.django_db


def _files_on_disk():
    root = Path(settings.MEDIA_ROOT)
    return sorted(p for p in root.rglob("*") if p.is_file()) if root.exists() else []


def test_it_stores_the_raw_bytes_unchanged_and_fits_version_one(bench, make_cv):
    data = make_cv(cjo=47e-12, vj=0.8, m=0.55)
    (out,) = record_file(data, "u1.csv")
    assert out.status == "stored", out.problems
    sweep = Sweep.objects.get(pk=out.sweep.pk)
    with sweep.raw_file.open("rb") as fh:
        assert fh.read() == data
    assert sweep.raw_sha256 == hashlib.sha256(data).hexdigest()
    assert sweep.n_points == 41
    fit = sweep.current_fit
    assert fit.version == 1 and fit.origin == "upload"
    # Noise-free data generated from known parameters (junction model, SPICE form).
    assert fit.cjo == pytest.approx(47e-12, rel=1e-4)
    assert fit.vj == pytest.approx(0.8, rel=1e-3)
    assert fit.m == pytest.approx(0.55, rel=1e-3)


def test_the_same_file_for_the_same_unit_is_reported_not_stored_twice(bench, make_cv):
    data = make_cv()
    record_file(data, "u1.csv")
    (again,) = record_file(data, "u1-copy.csv")
    assert again.status == "duplicate"
    assert Sweep.objects.count() == 1 and Fit.objects.count() == 1


def test_form_values_win_over_the_file_and_the_conflict_is_noted(bench, make_cv):
    (out,) = record_file(make_cv(unit="U1"), "u1.csv", SweepContext(unit="U7"))
    assert out.status == "stored"
    assert out.sweep.unit.label == "U7"
    assert any("U1" in n and "U7" in n for n in out.notes)


def test_a_file_naming_an_unknown_part_changes_nothing(bench, make_cv):
    before = _files_on_disk()
    (out,) = record_file(make_cv(part="NOPE-1"), "u1.csv")
    assert out.status == "rejected"
    assert "NOPE-1" in str(out.problems[0])
    assert Sweep.objects.count() == 0 and Unit.objects.count() == 0
    assert _files_on_disk() == before


def test_a_sweep_that_cannot_be_fitted_leaves_no_rows_and_no_file(bench, make_cv):
    data = make_cv(bias=[0.0, 0.1, 0.2, 0.3])  # span 0.3 V: too narrow to fit
    (out,) = record_file(data, "narrow.csv")
    assert out.status == "rejected"
    assert "fit" in str(out.problems[0]).lower()
    assert Sweep.objects.count() == 0 and Fit.objects.count() == 0 and Unit.objects.count() == 0
    assert _files_on_disk() == []


def test_a_failure_while_storing_rolls_back_and_removes_the_written_file(
    bench, make_cv, monkeypatch
):
    from labdb.measurements.services import fits

    def boom(*a, **k):
        raise RuntimeError("disk on fire")

    monkeypatch.setattr(fits, "store_fit", boom)
    with pytest.raises(RuntimeError):
        record_file(make_cv(), "u1.csv")
    assert Sweep.objects.count() == 0 and Unit.objects.count() == 0
    assert _files_on_disk() == []


def test_a_parse_error_is_located(bench):
    bad = b"# part: TST-V1\n# lot: L1\n# unit: U1\n# fixture: meter A\nbias (V),C (pF)\n0,50\n1,n/a\n2,30\n3,28\n"
    (out,) = record_file(bad, "bad.csv")
    assert out.status == "rejected"
    p = out.problems[0]
    assert p.file == "bad.csv" and p.line == 7
    assert "n/a" in p.message


def test_a_sweep_beyond_the_rating_is_stored_with_a_caution(bench, make_cv):
    bench.part.rated_reverse_v = 10.0
    bench.part.save()
    (out,) = record_file(make_cv(), "u1.csv")  # sweeps to 20 V
    assert out.status == "stored"
    assert out.sweep.exceeds_rating
    assert any("CAUTION" in n for n in out.notes)


def test_negative_diode_voltage_is_stored_as_positive_reverse_bias(bench, make_cv):
    v = np.linspace(0, 20, 41)
    data = make_cv(bias=v).replace(b"bias (V)", b"Vd (V)")
    lines = data.decode().splitlines()
    flipped = [ln if ln.startswith("#") or ln.startswith("Vd") else "-" + ln for ln in lines]
    (out,) = record_file(("\n".join(flipped) + "\n").encode(), "neg.csv")
    assert out.status == "stored", out.problems
    assert out.sweep.bias_negated
    assert min(out.sweep.points["bias_v"]) >= 0
