"""Run one claimed job: claim the row atomically, call the domain service, record the end.

A job row is claimed with one UPDATE that only matches a queued job or a running one whose
heartbeat is stale (its worker was lost). The claim token then guards every later write, so
a redelivered task never runs a job twice at once, and a worker that lost its claim cannot
overwrite the result of the one that took over.
"""

from __future__ import annotations

import logging
import threading
import time
import uuid
from datetime import timedelta

from django.conf import settings
from django.core.files.storage import default_storage
from django.db import connection, transaction
from django.db.models import Count, DateTimeField, F, Q, Sum, Value
from django.db.models.functions import Coalesce
from django.utils import timezone

from labdb.jobs.models import TERMINAL, Job, JobKind, JobState
from labdb.jobs.services.outcomes import summarize_import, summarize_refit

log = logging.getLogger("labdb.jobs")

RAN = "ran"
BUSY = "busy"  # another live worker holds the job
SKIPPED = "skipped"  # finished already, or no such job
FAILED = "failed"

PROGRESS_EVERY_S = 0.5


def claim(job_id: int, worker: str = "") -> Job | None:
    """Take the job if it is queued or its worker went silent; None when it is not ours."""
    now = timezone.now()
    stale = now - timedelta(seconds=settings.JOB_STALE_SECONDS)
    token = uuid.uuid4().hex
    taken = (
        Job.objects.filter(pk=job_id)
        .filter(
            Q(state=JobState.QUEUED)
            | Q(state=JobState.RUNNING, heartbeat_at__lt=stale)
            | Q(state=JobState.RUNNING, heartbeat_at__isnull=True)
        )
        .update(
            state=JobState.RUNNING,
            claim=token,
            worker=worker[:120],
            heartbeat_at=now,
            started_at=Coalesce(F("started_at"), Value(now, output_field=DateTimeField())),
            attempts=F("attempts") + 1,
        )
    )
    if not taken:
        return None
    job = Job.objects.select_related("owner").get(pk=job_id)
    if job.parent_id:
        Job.objects.filter(pk=job.parent_id, state=JobState.QUEUED).update(
            state=JobState.RUNNING, started_at=now, heartbeat_at=now
        )
    log.info(
        "job claimed",
        extra={"event": "job_claimed", "job_id": job_id, "attempt": job.attempts, "worker": worker},
    )
    return job


class _Progress:
    """Callback for services: writes done/total on the claimed row at most twice a second."""

    def __init__(self, job: Job):
        self.job = job
        self.last = 0.0

    def __call__(self, done: int, total: int | None = None) -> None:
        total = self.job.total if total is None else total
        now = time.monotonic()
        if now - self.last < PROGRESS_EVERY_S and done != total:
            return
        self.last = now
        done = min(done, total) if total is not None else done
        Job.objects.filter(pk=self.job.pk, claim=self.job.claim).update(
            done=done, total=total, heartbeat_at=timezone.now()
        )
        self.job.total = total


class _Heartbeat(threading.Thread):
    """Refresh ``heartbeat_at`` while a long step runs, so the job does not look abandoned."""

    def __init__(self, job: Job):
        super().__init__(daemon=True, name=f"job-{job.pk}-heartbeat")
        self.job = job
        self.halt = threading.Event()

    def run(self) -> None:
        interval = max(0.5, settings.JOB_STALE_SECONDS / 4)
        try:
            while not self.halt.wait(interval):
                Job.objects.filter(pk=self.job.pk, claim=self.job.claim).update(
                    heartbeat_at=timezone.now()
                )
        finally:
            connection.close()  # this thread's own connection

    def __enter__(self):
        self.start()
        return self

    def __exit__(self, *exc) -> None:
        self.halt.set()
        self.join()


def _run_import(job: Job, progress: _Progress) -> dict:
    from labdb.jobs.services.submit import context_from_json
    from labdb.measurements.services import import_archive
    from labdb.quality.hooks import lots_changed

    with default_storage.open(job.staged_file, "rb") as fh:
        data = fh.read()
    outcomes = import_archive(
        data,
        job.filename,
        context_from_json(job.params.get("context", {})),
        user=job.owner,
        origin=job.params.get("origin", "upload"),
        recompute=False,
        progress=progress,
    )
    # After a lost worker the files stored by the earlier attempt come back as duplicates;
    # their lots still need the recomputation that attempt never reached.
    resumed = job.attempts > 1
    lots = {
        o.sweep.unit.lot_id
        for o in outcomes
        if o.sweep is not None and (o.status == "stored" or (resumed and o.status == "duplicate"))
    }
    lots_changed(lots)
    return summarize_import(outcomes, attempt=job.attempts)


def _run_refit(job: Job, progress: _Progress) -> dict:
    from labdb.measurements.models import Sweep
    from labdb.measurements.services import refit_sweeps
    from labdb.quality.hooks import lots_changed

    ids = job.params.get("sweep_ids", [])
    summary = refit_sweeps(
        ids,
        model=job.params.get("model", "auto"),
        user=job.owner,
        origin="refit",
        progress=lambda n: progress(n, len(ids)),
    )
    if job.attempts > 1:
        # Versions written by the lost attempt now count as unchanged; recompute their lots.
        lots_changed(set(Sweep.objects.filter(pk__in=ids).values_list("unit__lot_id", flat=True)))
    return summarize_refit(summary, attempt=job.attempts)


def _run_recompute(job: Job, progress: _Progress) -> dict:
    # The service itself, not quality.hooks.lots_changed: that would queue this job again.
    from labdb.quality.services import recompute_lots

    ids = job.params.get("lot_ids", [])
    recompute_lots(ids)
    progress(len(ids), len(ids))
    return {"lots": len(ids), "attempt": job.attempts}


EXECUTORS = {
    JobKind.IMPORT_ARCHIVE: _run_import,
    JobKind.REFIT: _run_refit,
    JobKind.RECOMPUTE_LOTS: _run_recompute,
}


def _finish(job: Job, state: str, result: dict, error: str = "") -> bool:
    now = timezone.now()
    changes = {"state": state, "result": result, "error": error[:4000], "finished_at": now}
    if state == JobState.DONE and job.total is not None:
        changes["done"] = job.total
    won = Job.objects.filter(pk=job.pk, claim=job.claim, state=JobState.RUNNING).update(**changes)
    if not won:
        log.warning("job claim lost", extra={"event": "job_claim_lost", "job_id": job.pk})
        return False
    log.info(
        "job finished",
        extra={"event": "job_finished", "job_id": job.pk, "state": state, "attempt": job.attempts},
    )
    if state == JobState.DONE and job.staged_file:
        default_storage.delete(job.staged_file)
    if job.parent_id:
        roll_up(job.parent_id)
    return True


def roll_up(parent_id: int) -> None:
    """Finish a parent job once every child has finished, merging the children's counts."""
    with transaction.atomic():
        parent = Job.objects.select_for_update().get(pk=parent_id)
        if parent.state in TERMINAL:
            return
        children = parent.children.all()
        open_ = children.exclude(state__in=TERMINAL).count()
        if open_:
            return
        merged: dict = {}
        for res in children.values_list("result", flat=True):
            for k, v in (res or {}).items():
                if isinstance(v, int) and k != "attempt":
                    merged[k] = merged.get(k, 0) + v
        failed = children.filter(state=JobState.FAILED).count()
        merged["chunks"] = children.count()
        merged["failed_chunks"] = failed
        parent.state = JobState.FAILED if failed else JobState.DONE
        parent.result = merged
        parent.done = parent.total or 0
        parent.finished_at = timezone.now()
        parent.error = f"{failed} chunk(s) failed; open them for the reason" if failed else ""
        parent.save(update_fields=["state", "result", "done", "finished_at", "error"])


def execute(job_id: int, *, worker: str = "", heartbeat: bool = False) -> str:
    """Claim and run one job; returns RAN, BUSY, SKIPPED or FAILED.

    Parameters
    ----------
    job_id : int
        The job to run.
    worker : str
        Name of the process running it (shown to curators; helps after a worker loss).
    heartbeat : bool
        Keep ``heartbeat_at`` fresh from a side thread (workers; the inline path needs none).
    """
    job = claim(job_id, worker)
    if job is None:
        state = Job.objects.filter(pk=job_id).values_list("state", flat=True).first()
        return BUSY if state == JobState.RUNNING else SKIPPED
    progress = _Progress(job)
    try:
        if heartbeat:
            with _Heartbeat(job):
                result = EXECUTORS[job.kind](job, progress)
        else:
            result = EXECUTORS[job.kind](job, progress)
    except Exception as exc:  # a bug or an outage: record it on the job, never lose it
        log.exception("job failed", extra={"event": "job_failed", "job_id": job_id})
        _finish(job, JobState.FAILED, {"attempt": job.attempts}, f"{type(exc).__name__}: {exc}")
        return FAILED
    _finish(job, JobState.DONE, result)
    return RAN


def stale_job_ids() -> list[int]:
    """Jobs whose worker went silent, and queued jobs whose message may have been lost."""
    now = timezone.now()
    stale = now - timedelta(seconds=settings.JOB_STALE_SECONDS)
    forgotten = now - timedelta(seconds=10 * settings.JOB_STALE_SECONDS)
    qs = Job.objects.filter(
        Q(state=JobState.RUNNING, heartbeat_at__lt=stale, children__isnull=True)
        | Q(state=JobState.QUEUED, created_at__lt=forgotten, children__isnull=True)
    )
    return list(qs.values_list("pk", flat=True).distinct())


def job_status(job: Job) -> dict:
    """What the job page and the API show: state, progress, times and the result."""
    done, total = job.done, job.total
    if job.children.exists() and job.state not in TERMINAL:
        agg = job.children.aggregate(d=Sum("done"), n=Count("id"))
        done = agg["d"] or 0
    percent = None if not total else min(100, round(100 * done / total))
    if job.state == JobState.DONE:
        percent = 100
    return {
        "id": job.pk,
        "kind": job.kind,
        "kind_label": job.get_kind_display(),
        "state": job.state,
        "done": done,
        "total": total,
        "percent": percent,
        "attempts": job.attempts,
        "filename": job.filename,
        "created_at": job.created_at.isoformat() if job.created_at else None,
        "started_at": job.started_at.isoformat() if job.started_at else None,
        "finished_at": job.finished_at.isoformat() if job.finished_at else None,
        "result": job.result,
        "error": job.error,
        "finished": job.state in TERMINAL,
    }
