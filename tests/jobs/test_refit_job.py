"""Refit jobs: inline as one job, or split into chunks that several workers share."""

from __future__ import annotations

import pytest

from labdb.jobs.models import Job, JobState
from labdb.jobs.services import job_status, submit_archive_import, submit_refit
from labdb.measurements.errors import Rejected
from labdb.measurements.models import Fit, Sweep


@pytest.fixture
def stored(bench, member, make_archive, django_capture_on_commit_callbacks):
    with django_capture_on_commit_callbacks(execute=True):
        submit_archive_import(make_archive(5), "a.zip", user=member)
    return list(Sweep.objects.filter(unit__lot=bench.lot).values_list("pk", flat=True))


def test_it_refits_inline_and_writes_version_two_for_a_new_model(
    stored, curator, django_capture_on_commit_callbacks
):
    with django_capture_on_commit_callbacks(execute=True):
        job = submit_refit(stored, model="junction+cp", user=curator)
    job.refresh_from_db()
    assert job.state == JobState.DONE
    assert (job.result["examined"], job.result["new_versions"]) == (5, 5)
    assert Fit.objects.filter(sweep_id__in=stored, version=2).count() == 5


def test_the_same_refit_again_writes_nothing(stored, curator, django_capture_on_commit_callbacks):
    with django_capture_on_commit_callbacks(execute=True):
        first = submit_refit(stored, model="junction+cp", user=curator)
        second = submit_refit(stored, model="junction+cp", user=curator, key="another-key")
    second.refresh_from_db()
    assert second.pk != first.pk
    assert (second.result["new_versions"], second.result["unchanged"]) == (0, 5)
    assert Fit.objects.filter(sweep_id__in=stored).count() == 10


def test_a_large_refit_is_split_into_chunks_and_rolled_up(stored, curator, with_workers, settings):
    settings.JOB_REFIT_CHUNK = 2
    parent = submit_refit(stored, model="junction+cp", user=curator)
    children = list(parent.children.order_by("pk"))
    assert [len(c.params["sweep_ids"]) for c in children] == [2, 2, 1]
    assert with_workers == [c.pk for c in children]
    with_workers.run_all()
    parent.refresh_from_db()
    assert parent.state == JobState.DONE
    assert (parent.result["new_versions"], parent.result["chunks"]) == (5, 3)
    assert job_status(parent)["percent"] == 100


def test_an_unknown_model_is_refused_before_anything_is_queued(stored, curator):
    with pytest.raises(Rejected, match="unknown model"):
        submit_refit(stored, model="spline", user=curator)
    assert not Job.objects.filter(kind="refit").exists()
