"""An archive import submitted as a job: stored once, counted, and never queued twice."""

from __future__ import annotations

from numpy.testing import assert_allclose

from labdb.jobs.models import Job, JobState
from labdb.jobs.services import job_status, submit_archive_import
from labdb.measurements.models import Fit, Sweep
from labdb.measurements.services import SweepContext


def test_it_imports_an_archive_inline_when_no_broker_is_set(
    bench, member, make_archive, django_capture_on_commit_callbacks
):
    with django_capture_on_commit_callbacks(execute=True):
        job = submit_archive_import(make_archive(5), "batch.zip", user=member)
    job.refresh_from_db()
    assert job.state == JobState.DONE
    assert (job.done, job.total, job.attempts) == (5, 5, 1)
    assert (job.result["stored"], job.result["duplicate"], job.result["rejected"]) == (5, 0, 0)
    assert Sweep.objects.filter(unit__lot=bench.lot).count() == 5
    assert Fit.objects.filter(sweep__unit__lot=bench.lot, version=1).count() == 5
    # The generator wrote CJO = (40 + i) pF with 6 decimals in pF (tests/jobs/conftest.py).
    for row in job.result["files"]:
        sweep = Sweep.objects.get(pk=row["sweep"])
        i = int(sweep.unit.label[1:])
        assert_allclose(sweep.current_fit.cjo, (40 + i) * 1e-12, rtol=1e-4)


def test_it_records_the_uploader_and_the_form_context(
    bench, member, make_archive, django_capture_on_commit_callbacks
):
    ctx = SweepContext(operator="bench-3", temperature_c=30.0)
    with django_capture_on_commit_callbacks(execute=True):
        submit_archive_import(make_archive(2), "batch.zip", ctx, user=member)
    sweeps = Sweep.objects.filter(unit__lot=bench.lot)
    assert {s.uploaded_by_id for s in sweeps} == {member.pk}
    assert {s.operator for s in sweeps} == {"bench-3"}


def test_it_returns_the_same_job_for_the_same_submission(bench, member, make_archive, with_workers):
    data = make_archive(3)
    first = submit_archive_import(data, "batch.zip", user=member)
    again = submit_archive_import(data, "batch.zip", user=member)
    assert again.pk == first.pk
    assert with_workers == [first.pk]  # enqueued once
    assert Job.objects.count() == 1


def test_it_requeues_a_failed_submission_when_sent_again(bench, member, make_archive, with_workers):
    data = make_archive(2)
    job = submit_archive_import(data, "batch.zip", user=member)
    Job.objects.filter(pk=job.pk).update(state=JobState.FAILED, error="boom")
    with_workers.clear()
    again = submit_archive_import(data, "batch.zip", user=member)
    assert again.pk == job.pk and again.state == JobState.QUEUED and again.error == ""
    assert with_workers == [job.pk]


def test_it_reports_rejected_members_with_their_location(
    bench, member, make_archive, make_cv, django_capture_on_commit_callbacks
):
    import io
    import zipfile

    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("good.csv", make_cv(unit="G1"))
        zf.writestr("bad.csv", make_cv(unit="B1", part="NO-SUCH-PART"))
    with django_capture_on_commit_callbacks(execute=True):
        job = submit_archive_import(buf.getvalue(), "mixed.zip", user=member)
    job.refresh_from_db()
    assert job.state == JobState.DONE
    assert (job.result["stored"], job.result["rejected"]) == (1, 1)
    assert any("bad.csv" in e and "NO-SUCH-PART" in e for e in job.result["errors"])


def test_its_status_reports_progress_as_a_percentage(bench, member, make_archive, with_workers):
    job = submit_archive_import(make_archive(4), "batch.zip", user=member)
    Job.objects.filter(pk=job.pk).update(done=1, total=4)
    job.refresh_from_db()
    status = job_status(job)
    assert (status["state"], status["done"], status["total"], status["percent"]) == (
        "queued",
        1,
        4,
        25,
    )
    assert status["finished"] is False
