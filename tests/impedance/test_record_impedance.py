"""Recording impedance sweeps: raw bytes kept, points and R–L–C fit v1 stored — or nothing."""

import hashlib

import pytest

from labdb.measurements.models import ImpedanceFit, Sweep
from labdb.measurements.services import SweepContext, preview_file, record_file, refit_sweeps
from labdb.measurements.services.impedance import fit_impedance_sweep

pytestmark = pytest.mark.django_db


def test_a_one_port_file_is_stored_with_its_series_equivalent(analyser, make_s1p):
    data = make_s1p()
    (out,) = record_file(data, "u1_2V.s1p")
    assert out.status == "stored", out.problems
    sweep = Sweep.objects.get(pk=out.sweep.pk)
    assert sweep.kind == "zf" and sweep.n_points == 201
    assert sweep.bias_min_v == sweep.bias_max_v == 2.0 and sweep.points["bias_v"] == 2.0
    assert sweep.raw_sha256 == hashlib.sha256(data).hexdigest()
    with sweep.raw_file.open("rb") as fh:
        assert fh.read() == data
    assert sweep.current_fit is None  # no junction fit for an impedance sweep
    fit = sweep.impedance_fits.get()
    assert (
        fit.version == 1 and fit.origin == "upload" and fit.fitter_version.startswith("labdb-rlc")
    )
    # noise-free file written from Rs 0.5 Ω, Ls 1.5 nH, Cs 50 pF (tests/impedance/conftest.py)
    assert fit.rs_ohm == pytest.approx(0.5, rel=1e-6)
    assert fit.ls_h == pytest.approx(1.5e-9, rel=1e-6)
    assert fit.cs_f == pytest.approx(50e-12, rel=1e-6)
    assert any(n.startswith("series equivalent: Cs 50 pF") for n in out.notes)


def test_the_same_file_twice_is_a_duplicate(analyser, make_s1p):
    record_file(make_s1p(), "a.s1p")
    (again,) = record_file(make_s1p(), "b.s1p")
    assert again.status == "duplicate"
    assert Sweep.objects.count() == 1 and ImpedanceFit.objects.count() == 1


def test_a_file_without_a_bias_is_refused_unless_the_form_gives_one(analyser, make_s1p):
    (out,) = record_file(make_s1p(bias=None), "a.s1p")
    assert out.status == "rejected" and out.problems[0].field == "bias_v"
    assert Sweep.objects.count() == 0
    (out,) = record_file(make_s1p(bias=None), "a.s1p", SweepContext(bias_v=5.0))
    assert out.status == "stored" and out.sweep.bias_min_v == 5.0


def test_the_form_bias_wins_over_the_file_and_the_conflict_is_noted(analyser, make_s1p):
    (out,) = record_file(make_s1p(bias="2 V"), "a.s1p", SweepContext(bias_v=3.0))
    assert out.sweep.bias_min_v == 3.0
    assert any("2 V" in n and "3 V" in n for n in out.notes)


def test_an_oscillator_fixture_or_another_kind_is_refused(analyser, make_s1p):
    (out,) = record_file(make_s1p(fixture="osc A"), "a.s1p")
    assert out.status == "rejected" and "oscillator" in out.problems[0].message
    (out,) = record_file(make_s1p(), "a.s1p", SweepContext(kind="cv"))
    assert out.status == "rejected" and out.problems[0].field == "kind"
    assert Sweep.objects.count() == 0


def test_a_bias_beyond_the_rating_is_stored_with_a_caution(analyser, make_s1p):
    (out,) = record_file(make_s1p(bias="35 V"), "a.s1p")  # TST-V1 is rated 30 V
    assert out.status == "stored" and any(n.startswith("CAUTION") for n in out.notes)


def test_a_text_table_goes_the_same_way(analyser):
    rows = "\n".join(
        f"{f:g},0.5,{-1 / (6.283185307179586 * f * 50e-12):.9g}" for f in (1e5, 1e6, 1e7, 1e8)
    )
    data = ("# part: TST-V1\n# lot: L1\n# unit: U2\n# fixture: analyser A\n# bias: 1 V\n"
            "f (Hz),R (ohm),X (ohm)\n" + rows + "\n").encode()  # fmt: skip
    (out,) = record_file(data, "u2.csv")
    assert out.status == "stored", out.problems
    assert out.sweep.kind == "zf" and out.sweep.impedance_fits.get().cs_f == pytest.approx(
        50e-12, rel=1e-6
    )


def test_preview_stores_nothing_and_summarises_the_fit(analyser, make_s1p):
    (out,) = preview_file(make_s1p(), "a.s1p")
    assert out.status == "preview" and any("series equivalent" in n for n in out.notes)
    assert Sweep.objects.count() == 0


def test_refitting_writes_nothing_new_when_nothing_changed(analyser, make_s1p):
    (out,) = record_file(make_s1p(noise=1e-3), "a.s1p")
    assert fit_impedance_sweep(out.sweep) is None
    summary = refit_sweeps([out.sweep.pk])
    assert (summary.examined, summary.unchanged, summary.failed) == (1, 1, [])
    assert out.sweep.impedance_fits.count() == 1


def test_a_new_fitter_version_writes_version_two_and_keeps_version_one(
    analyser, make_s1p, monkeypatch
):
    import labdb.measurements.services.impedance as service

    (out,) = record_file(make_s1p(), "a.s1p")
    monkeypatch.setattr(service, "IMPEDANCE_FITTER_VERSION", "labdb-rlc test")
    fit = fit_impedance_sweep(out.sweep, origin="refit")
    assert fit.version == 2 and out.sweep.impedance_fits.count() == 2
    v1 = out.sweep.impedance_fits.get(version=1)
    with pytest.raises(Exception, match="never changed"):
        v1.save()


def _zip(members: dict[str, bytes]) -> bytes:
    import io
    import zipfile

    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        for name, data in members.items():
            zf.writestr(name, data)
    return buf.getvalue()


def test_an_archive_of_one_port_files_takes_each_bias_from_its_manifest_row(analyser, make_s1p):
    manifest = b"file,unit,bias\nz/a.s1p,U5,1.5\nz/b.s1p,U5,3\nz/c.s1p,U5,three\n"
    data = _zip(
        {
            "manifest.csv": manifest,
            "z/a.s1p": make_s1p(bias=None, cs=40e-12),
            "z/b.s1p": make_s1p(bias=None, cs=30e-12),
            "z/c.s1p": make_s1p(bias=None, cs=20e-12),
        }
    )
    outs = {o.source: o for o in record_file(data, "series.zip")}
    assert outs["z/a.s1p"].status == outs["z/b.s1p"].status == "stored"
    assert outs["z/a.s1p"].sweep.bias_min_v == 1.5 and outs["z/b.s1p"].sweep.bias_min_v == 3.0
    assert outs["z/a.s1p"].sweep.unit.label == "U5"
    bad = outs["z/c.s1p"]
    assert bad.status == "rejected" and "three" in bad.problems[0].message
    assert Sweep.objects.filter(kind="zf").count() == 2


def test_a_refit_of_bias_and_impedance_sweeps_together_handles_each_kind(
    analyser, make_s1p, make_cv
):
    (zf,) = record_file(make_s1p(), "a.s1p")
    (cv,) = record_file(make_cv(), "cv.csv")
    summary = refit_sweeps([zf.sweep.pk, cv.sweep.pk], model="junction")
    # the C–V sweep was fitted with model "auto": asking for "junction" is a new input
    assert (summary.examined, summary.new_versions, summary.unchanged) == (2, 1, 1)
    assert summary.failed == [] and cv.sweep.fits.count() == 2
    assert zf.sweep.impedance_fits.count() == 1
