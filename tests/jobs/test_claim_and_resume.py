"""Claiming a job is atomic; a job left by a lost worker resumes once, without duplicates."""

from __future__ import annotations

from datetime import timedelta

import pytest
from django.utils import timezone

from labdb.jobs.models import Job, JobState
from labdb.jobs.services import runner, submit_archive_import
from labdb.measurements.models import Fit, Sweep


class WorkerLost(BaseException):
    """Stands in for SIGKILL: not an Exception, so nothing in the job code catches it."""


def _age(job, seconds):
    Job.objects.filter(pk=job.pk).update(heartbeat_at=timezone.now() - timedelta(seconds=seconds))


def test_a_second_claim_of_a_live_job_gets_nothing(bench, member, make_archive, with_workers):
    job = submit_archive_import(make_archive(1), "a.zip", user=member)
    assert runner.claim(job.pk, "w1") is not None
    assert runner.claim(job.pk, "w2") is None
    assert runner.execute(job.pk) == runner.BUSY


def test_a_job_whose_worker_went_silent_is_claimed_again(
    bench, member, make_archive, with_workers, settings
):
    settings.JOB_STALE_SECONDS = 30
    job = submit_archive_import(make_archive(1), "a.zip", user=member)
    first = runner.claim(job.pk, "w1")
    _age(job, 31)
    second = runner.claim(job.pk, "w2")
    assert second is not None and second.claim != first.claim
    assert (second.attempts, second.worker) == (2, "w2")


def test_a_worker_that_lost_its_claim_cannot_finish_the_job(
    bench, member, make_archive, with_workers, settings
):
    settings.JOB_STALE_SECONDS = 30
    job = submit_archive_import(make_archive(1), "a.zip", user=member)
    old = runner.claim(job.pk, "w1")
    _age(job, 31)
    runner.claim(job.pk, "w2")
    assert runner._finish(old, JobState.DONE, {"stored": 99}) is False
    job.refresh_from_db()
    assert job.state == JobState.RUNNING and job.result == {}


def test_a_finished_job_is_skipped_when_its_task_comes_again(
    bench, member, make_archive, with_workers
):
    job = submit_archive_import(make_archive(2), "a.zip", user=member)
    assert runner.execute(job.pk) == runner.RAN
    assert runner.execute(job.pk) == runner.SKIPPED
    assert Sweep.objects.filter(unit__lot=bench.lot).count() == 2


def test_an_import_killed_midway_resumes_and_stores_each_file_once(
    bench, member, make_archive, with_workers, settings, monkeypatch
):
    settings.JOB_STALE_SECONDS = 30
    n, kill_after = 6, 3
    job = submit_archive_import(make_archive(n), "a.zip", user=member)
    real_progress_call = runner._Progress.__call__

    def dying(self, done, total=None):
        real_progress_call(self, done, total)
        if done == kill_after:
            raise WorkerLost

    monkeypatch.setattr(runner._Progress, "__call__", dying)
    with pytest.raises(WorkerLost):
        runner.execute(job.pk)
    assert Sweep.objects.filter(unit__lot=bench.lot).count() == kill_after
    job.refresh_from_db()
    assert job.state == JobState.RUNNING  # what a killed worker leaves behind

    monkeypatch.setattr(runner._Progress, "__call__", real_progress_call)
    assert runner.execute(job.pk) == runner.BUSY  # heartbeat still fresh: not yet
    _age(job, 31)
    assert job.pk in runner.stale_job_ids()
    assert runner.execute(job.pk) == runner.RAN

    job.refresh_from_db()
    assert (job.state, job.attempts) == (JobState.DONE, 2)
    assert (job.result["stored"], job.result["duplicate"]) == (n - kill_after, kill_after)
    sweeps = Sweep.objects.filter(unit__lot=bench.lot)
    assert sweeps.count() == n
    assert len({s.raw_sha256 for s in sweeps}) == n
    assert Fit.objects.filter(sweep__in=sweeps).count() == n  # version 1 each, no repeats


def test_a_failing_job_is_marked_failed_with_the_reason(bench, member, with_workers, make_archive):
    job = submit_archive_import(make_archive(1), "a.zip", user=member)
    from django.core.files.storage import default_storage

    default_storage.delete(job.staged_file)  # the staged archive vanished
    assert runner.execute(job.pk) == runner.FAILED
    job.refresh_from_db()
    assert job.state == JobState.FAILED
    assert "FileNotFoundError" in job.error or "No such file" in job.error
