"""GET /api/v1/jobs/{id}/: the owner or a curator reads a job's state and progress."""

from __future__ import annotations

import pytest

from labdb.jobs.models import Job


@pytest.fixture
def job(member):
    return Job.objects.create(
        kind="refit",
        owner=member,
        idempotency_key="api-k",
        params={},
        params_sha256="x",
        total=8,
        done=2,
    )


def test_the_owner_reads_state_and_progress(member_client, job):
    r = member_client.get(f"/api/v1/jobs/{job.pk}/")
    assert r.status_code == 200
    body = r.json()
    assert (body["id"], body["state"], body["done"], body["total"], body["percent"]) == (
        job.pk,
        "queued",
        2,
        8,
        25,
    )


def test_a_curator_reads_any_job(curator_client, job):
    assert curator_client.get(f"/api/v1/jobs/{job.pk}/").status_code == 200


def test_someone_elses_job_is_not_found(viewer_client, job):
    assert viewer_client.get(f"/api/v1/jobs/{job.pk}/").status_code == 404


def test_an_anonymous_request_is_answered_401(client, job):
    assert client.get(f"/api/v1/jobs/{job.pk}/").status_code == 401
