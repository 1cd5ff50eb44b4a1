"""Job pages: owners and curators see a job and its live status; nobody else does."""

from __future__ import annotations

import pytest

from labdb.jobs.models import Job


@pytest.fixture
def job(member):
    return Job.objects.create(
        kind="import_archive",
        owner=member,
        idempotency_key="k1",
        params={},
        params_sha256="x",
        filename="batch.zip",
        total=10,
        done=4,
    )


def test_the_owner_sees_the_job_page_with_its_status_endpoint(member_client, job):
    r = member_client.get(f"/jobs/{job.pk}/")
    assert r.status_code == 200
    html = r.content.decode()
    assert f'data-status-url="/jobs/{job.pk}/status"' in html
    assert "labdb/jobs.js" in html


def test_the_status_endpoint_gives_state_and_progress_as_json(member_client, job):
    r = member_client.get(f"/jobs/{job.pk}/status")
    assert r.status_code == 200
    body = r.json()
    assert (body["state"], body["done"], body["total"], body["percent"]) == ("queued", 4, 10, 40)
    assert r["Cache-Control"].startswith("max-age=0")


def test_another_member_gets_404_for_someone_elses_job(viewer_client, job):
    assert viewer_client.get(f"/jobs/{job.pk}/").status_code == 404
    assert viewer_client.get(f"/jobs/{job.pk}/status").status_code == 404


def test_a_curator_sees_every_users_jobs(curator_client, job):
    assert curator_client.get(f"/jobs/{job.pk}/status").status_code == 200
    assert "batch.zip" in curator_client.get("/jobs/").content.decode()


def test_the_list_shows_only_the_users_own_jobs(viewer_client, viewer, job):
    Job.objects.create(
        kind="refit", owner=viewer, idempotency_key="k2", params={}, params_sha256="y"
    )
    html = viewer_client.get("/jobs/").content.decode()
    assert "batch.zip" not in html and "refit" in html


def test_anonymous_visitors_are_sent_to_log_in(client, job):
    r = client.get(f"/jobs/{job.pk}/status")
    assert r.status_code == 302 and "/accounts/login" in r["Location"]
