"""Refitting writes version n+1 only when inputs, model choice or fitter changed."""

import pytest
from django.core.management import call_command

from labdb.measurements.models import Fit
from labdb.measurements.services import fit_sweep, record_file, refit_sweeps

pytestmark = pytest.mark.django_db


@pytest.fixture
def sweep(bench, make_cv):
    (out,) = record_file(make_cv(noise=0.003), "u1.csv")
    return out.sweep


def test_the_same_refit_twice_writes_nothing(sweep):
    assert fit_sweep(sweep, model="auto") is None
    summary = refit_sweeps([sweep.pk], model="auto")
    assert (summary.new_versions, summary.unchanged) == (0, 1)
    assert Fit.objects.filter(sweep=sweep).count() == 1


def test_a_different_model_choice_writes_the_next_version_once(sweep):
    new = fit_sweep(sweep, model="junction+cp")
    assert new.version == 2
    assert fit_sweep(sweep, model="junction+cp") is None
    sweep.refresh_from_db()
    assert sweep.current_fit_id == new.pk
    assert list(Fit.objects.filter(sweep=sweep).values_list("version", flat=True)) == [2, 1]


def test_a_new_fitter_version_writes_a_new_version(sweep, monkeypatch):
    from labdb.measurements.services import fits

    monkeypatch.setattr(fits, "FITTER_VERSION", "labdb-fit test-next")
    assert fit_sweep(sweep, model="auto").version == 2


def test_a_stored_fit_cannot_be_changed(sweep):
    from labdb.measurements.models import ImmutableError

    fit = sweep.current_fit
    fit.cjo = 1.0
    with pytest.raises(ImmutableError):
        fit.save()


def test_the_refit_command_prints_counts(sweep, capsys):
    call_command("refit", "--model", "junction", "--no-progress")
    out = capsys.readouterr().out
    assert "new versions" in out and "1" in out
    assert Fit.objects.filter(sweep=sweep).count() == 2
