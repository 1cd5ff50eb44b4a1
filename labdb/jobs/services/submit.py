"""Create a Job and enqueue it once the surrounding transaction commits (or run it inline)."""

from __future__ import annotations

import hashlib
import json
import uuid
from collections.abc import Iterable
from dataclasses import asdict
from datetime import datetime

from django.conf import settings
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage
from django.db import IntegrityError, transaction

from labdb.jobs.models import Job, JobKind, JobState
from labdb.measurements.errors import Problem, Rejected
from labdb.measurements.services import SweepContext

STAGING_DIR = "jobs/staging"


def broker_configured() -> bool:
    """True when a Celery broker is set (``CELERY_BROKER_URL``); otherwise jobs run inline."""
    return bool(getattr(settings, "CELERY_BROKER_URL", ""))


def _sha(text: str | bytes) -> str:
    return hashlib.sha256(text.encode() if isinstance(text, str) else text).hexdigest()


def context_to_json(ctx: SweepContext) -> dict:
    """A SweepContext as JSON-safe values (the measurement time as ISO 8601)."""
    out = asdict(ctx)
    if isinstance(out.get("measured_at"), datetime):
        out["measured_at"] = out["measured_at"].isoformat()
    return out


def context_from_json(data: dict) -> SweepContext:
    """The inverse of :func:`context_to_json`."""
    values = dict(data)
    if values.get("measured_at"):
        values["measured_at"] = datetime.fromisoformat(values["measured_at"])
    return SweepContext(**values)


def _enqueue(job_id: int) -> None:
    """Hand the job to a worker after commit; without a broker, run it inline after commit."""
    if broker_configured():
        from labdb.jobs.tasks import run_job

        transaction.on_commit(lambda: run_job.delay(job_id))
    else:
        from labdb.jobs.services.runner import execute

        transaction.on_commit(lambda: execute(job_id))


def _requeue_failed(job: Job) -> Job:
    # Submitting the same work again after a failure is the user's way to retry it.
    Job.objects.filter(pk=job.pk, state=JobState.FAILED).update(
        state=JobState.QUEUED, error="", claim="", done=0, finished_at=None
    )
    job.refresh_from_db()
    _enqueue(job.pk)
    return job


def _create(key: str, **fields) -> tuple[Job, bool]:
    """The job with this key: a new one (True) or the one already submitted (False)."""
    existing = Job.objects.filter(idempotency_key=key).first()
    if existing is not None:
        if existing.state == JobState.FAILED:
            return _requeue_failed(existing), False
        return existing, False
    try:
        with transaction.atomic():
            return Job.objects.create(idempotency_key=key, **fields), True
    except IntegrityError:
        # A concurrent submission of the same work won the race; use its job.
        return Job.objects.get(idempotency_key=key), False


def submit_archive_import(
    data: bytes,
    filename: str,
    ctx: SweepContext | None = None,
    *,
    user=None,
    origin: str = "upload",
    key: str | None = None,
) -> Job:
    """Stage a zip archive and queue its import; the same submission twice gives one job.

    Parameters
    ----------
    data : bytes
        The archive exactly as uploaded.
    filename : str
        Its name (must end in ``.zip``).
    ctx : SweepContext, optional
        Form or API values that win over the files' own metadata.
    user : User, optional
        The owner of the job and uploader of the sweeps.
    origin : str
        Recorded on each fit ("upload", "api", "command").
    key : str, optional
        An idempotency key from the client; by default the owner, the archive's sha256, the
        file name and the context decide.
    """
    if not filename.lower().endswith(".zip"):
        raise Rejected(Problem("only .zip archives are imported in the background", file=filename))
    ctx = ctx or SweepContext()
    ctx_json = context_to_json(ctx)
    params = {"context": ctx_json, "origin": origin}
    digest = _sha(data)
    if key is None:
        owner = getattr(user, "pk", None)
        key = "import:" + _sha(f"{owner}|{digest}|{filename}|{json.dumps(params, sort_keys=True)}")
    existing = Job.objects.filter(idempotency_key=key).first()
    if existing is not None and existing.state != JobState.FAILED:
        return existing
    staged = f"{STAGING_DIR}/{_sha(key)[:32]}.zip"
    if not default_storage.exists(staged):
        staged = default_storage.save(staged, ContentFile(data))
    job, created = _create(
        key,
        kind=JobKind.IMPORT_ARCHIVE,
        owner=user,
        params=params,
        params_sha256=digest,
        staged_file=staged,
        filename=filename[:255],
    )
    if created:
        _enqueue(job.pk)
    return job


def submit_refit(
    sweep_ids: Iterable[int], *, model: str = "auto", user=None, key: str | None = None
) -> Job:
    """Queue a refit of these sweeps; with a broker, split into chunks that workers share.

    Parameters
    ----------
    sweep_ids : iterable of int
        Sweeps to refit.
    model : str
        "auto", "junction" or "junction+cp".
    user : User, optional
        Owner of the job; recorded as the author of new fit versions.
    key : str, optional
        Idempotency key; by default the owner, the model, the fitter version and the ids.
    """
    from labdb.measurements.services.fits import MODEL_CHOICES
    from labdb.physics import FITTER_VERSION

    if model not in MODEL_CHOICES:
        raise Rejected(
            Problem(f"unknown model {model!r}; use one of {MODEL_CHOICES}", field="model")
        )
    ids = sorted({int(i) for i in sweep_ids})
    digest = _sha(f"{model}|{FITTER_VERSION}|" + ",".join(map(str, ids)))
    owner = getattr(user, "pk", None)
    key = key or "refit:" + _sha(f"{owner}|{digest}")
    chunk = max(1, settings.JOB_REFIT_CHUNK)
    fan_out = broker_configured() and len(ids) > chunk
    params = {"model": model, "n_sweeps": len(ids)}
    if not fan_out:
        params["sweep_ids"] = ids
    job, created = _create(
        key, kind=JobKind.REFIT, owner=user, params=params, params_sha256=digest, total=len(ids)
    )
    if not created:
        return job
    if not fan_out:
        _enqueue(job.pk)
        return job
    # Each chunk is its own job so several workers share one large refit; the parent's
    # progress and result are rolled up from its children.
    for n, start in enumerate(range(0, len(ids), chunk)):
        part = ids[start : start + chunk]
        child = Job.objects.create(
            kind=JobKind.REFIT,
            owner=user,
            parent=job,
            idempotency_key=f"{key}:{n}",
            params={"model": model, "sweep_ids": part},
            params_sha256=digest,
            total=len(part),
        )
        _enqueue(child.pk)
    return job


def submit_lot_recompute(lot_ids: Iterable[int]) -> Job | None:
    """Queue recomputation of lot summaries and flags; reuse a still-queued job for the same lots.

    Parameters
    ----------
    lot_ids : iterable of int
        Lots whose current fits changed.
    """
    ids = sorted({int(i) for i in lot_ids})
    if not ids:
        return None
    digest = _sha(",".join(map(str, ids)))
    queued = Job.objects.filter(
        kind=JobKind.RECOMPUTE_LOTS, params_sha256=digest, state=JobState.QUEUED
    ).first()
    if queued is not None:
        # It has not started, so it will see the data that changed just now.
        return queued
    # Recomputation is wanted again after every change, so the key is fresh each time.
    job, _ = _create(
        f"lots:{uuid.uuid4().hex}",
        kind=JobKind.RECOMPUTE_LOTS,
        params={"lot_ids": ids},
        params_sha256=digest,
        total=len(ids),
    )
    _enqueue(job.pk)
    return job
