"""The upload page sends archives to a background job when workers exist."""

from __future__ import annotations

from django.core.files.uploadedfile import SimpleUploadedFile

from labdb.jobs.models import Job, JobState
from labdb.measurements.models import Sweep


def test_an_archive_upload_redirects_to_its_job_page(
    bench, member, member_client, make_archive, with_workers
):
    upload = SimpleUploadedFile("batch.zip", make_archive(3), content_type="application/zip")
    r = member_client.post("/upload/", {"files": [upload], "store": "1", "model": "auto"})
    job = Job.objects.get()
    assert r.status_code == 302 and r["Location"] == f"/jobs/{job.pk}/"
    assert job.owner == member and job.state == JobState.QUEUED
    assert not Sweep.objects.exists()  # nothing stored until a worker runs it
    with_workers.run_all()
    assert Sweep.objects.filter(unit__lot=bench.lot).count() == 3


def test_without_workers_an_archive_is_stored_during_the_request(
    bench, member_client, make_archive
):
    upload = SimpleUploadedFile("batch.zip", make_archive(2), content_type="application/zip")
    r = member_client.post("/upload/", {"files": [upload], "store": "1", "model": "auto"})
    assert r.status_code == 200
    assert Sweep.objects.filter(unit__lot=bench.lot).count() == 2
    assert not Job.objects.exists()
