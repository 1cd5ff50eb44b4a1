"""Celery tasks: each takes a job id and calls the job services, nothing else."""

from __future__ import annotations

import logging

from celery.signals import worker_ready
from django.conf import settings
from django.db import close_old_connections

from labdb.celery import app
from labdb.jobs.services import BUSY, execute, stale_job_ids

log = logging.getLogger("labdb.jobs")


@app.task(
    bind=True,
    name="labdb.jobs.run_job",
    acks_late=True,
    reject_on_worker_lost=True,
    max_retries=None,
)
def run_job(self, job_id: int) -> str:
    """Claim and run job ``job_id``; if a live worker holds it, look again later.

    Looking again (instead of dropping the message) covers the case where that worker dies
    before finishing: once its heartbeat is stale, the retry claims the job and resumes it.
    """
    close_old_connections()
    outcome = execute(job_id, worker=self.request.hostname or "", heartbeat=True)
    if outcome == BUSY:
        raise self.retry(countdown=settings.JOB_STALE_SECONDS)
    return outcome


@worker_ready.connect
def requeue_stale_jobs(sender=None, **kwargs) -> None:
    """On worker start, send again the jobs a lost worker left behind."""
    try:
        ids = stale_job_ids()
    finally:
        close_old_connections()
    for job_id in ids:
        log.info("requeue stale job", extra={"event": "job_requeued", "job_id": job_id})
        run_job.delay(job_id)
