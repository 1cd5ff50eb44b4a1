"""Checks against a real Celery worker, Redis and PostgreSQL: import, refit, worker loss.

Run by .ci/run (section "worker") with DATABASE_URL pointing at an empty, migrated
PostgreSQL database and CELERY_BROKER_URL at a Redis database this script may flush:

    DATABASE_URL=postgres://postgres@127.0.0.1:5432/labdb_ci_worker \\
    CELERY_BROKER_URL=redis://127.0.0.1:6379/15 .venv/bin/python tests/worker/run_worker_checks.py

Prints one line per check and "N passed, M failed" last; exits non-zero on any failure.
Bounded in time: every wait has a deadline, and workers are killed on the way out.
"""

from __future__ import annotations

import io
import json
import os
import signal
import subprocess
import sys
import tempfile
import time
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

RESULTS: list[tuple[str, bool, str]] = []
WORKERS: list[subprocess.Popen] = []
STALE_S = 4  # JOB_STALE_SECONDS for this run: a killed worker's job is resumed after this


def check(name: str, ok: bool, detail: str = "") -> bool:
    RESULTS.append((name, bool(ok), detail))
    print(f"{'PASS' if ok else 'FAIL'}  {name}" + (f"  ({detail})" if detail else ""), flush=True)
    return bool(ok)


def wait_for(what: str, predicate, timeout_s: float, every_s: float = 0.2):
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        value = predicate()
        if value:
            return value
        time.sleep(every_s)
    raise TimeoutError(f"gave up after {timeout_s:.0f} s waiting for {what}")


def setup_environment(media: str) -> dict[str, str]:
    for name in ("DATABASE_URL", "CELERY_BROKER_URL"):
        if not os.environ.get(name):
            sys.exit(f"set {name} (see the docstring of {__file__})")
    os.environ.update(
        {
            "DJANGO_SETTINGS_MODULE": "labdb.settings",
            "SECRET_KEY": os.environ.get("SECRET_KEY") or "ci-worker-checks-not-a-secret",
            "DEBUG": "0",
            "MEDIA_ROOT": media,
            "LABDB_VAR_DIR": media,
            "LOG_FORMAT": "json",
            "JOB_STALE_SECONDS": str(STALE_S),
            "CELERY_VISIBILITY_TIMEOUT": "10",
            "JOB_REFIT_CHUNK": "8",
        }
    )
    return dict(os.environ)


def start_worker(name: str, log_path: Path, env: dict[str, str]) -> subprocess.Popen:
    log = open(log_path, "ab")
    proc = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "celery",
            "-A",
            "labdb.celery",
            "worker",
            "--pool=prefork",
            "--concurrency=1",
            "-n",
            f"{name}@%h",
            "--without-gossip",
            "--without-mingle",
            "--without-heartbeat",
            "--loglevel=INFO",
        ],
        cwd=ROOT,
        env=env,
        stdout=log,
        stderr=subprocess.STDOUT,
        start_new_session=True,  # its own process group: SIGKILL takes the pool children too
    )
    WORKERS.append(proc)
    wait_for(f"worker {name} to be ready", lambda: b"ready." in log_path.read_bytes(), 60)
    return proc


def kill_worker(proc: subprocess.Popen, sig=signal.SIGKILL) -> None:
    try:
        os.killpg(proc.pid, sig)
    except ProcessLookupError:
        pass
    try:
        proc.wait(timeout=30)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.wait(timeout=10)


def log_events(paths: list[Path], event: str, job_id: int) -> int:
    n = 0
    for path in paths:
        for line in path.read_text(errors="replace").splitlines():
            try:
                rec = json.loads(line)
            except ValueError:
                continue
            if rec.get("event") == event and rec.get("job_id") == job_id:
                n += 1
    return n


def make_archive(n: int, lot: str, part: str, fixture: str) -> bytes:
    """A zip of n C–V files from C(V) = CJO·(1 + V/VJ)^(−M), CJO = (40 + i/10) pF, VJ 0.7, M 0.5."""
    import numpy as np

    from labdb.physics import junction_capacitance

    v = np.linspace(0, 20, 41)
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for i in range(n):
            c = junction_capacitance(v, (40 + i / 10) * 1e-12, 0.7, 0.5)
            head = f"# part: {part}\n# lot: {lot}\n# unit: U{i:04d}\n# fixture: {fixture}\nbias (V),C (pF)\n"
            rows = "".join(f"{a:.4f},{b * 1e12:.6f}\n" for a, b in zip(v, c, strict=True))
            zf.writestr(f"run/U{i:04d}.csv", head + rows)
    return buf.getvalue()


def submit(data: bytes, name: str, user):
    from django.db import transaction

    from labdb.jobs.services import submit_archive_import

    with transaction.atomic():  # enqueued on commit, as from the upload page
        return submit_archive_import(data, name, user=user)


def job_state(job_id: int):
    from labdb.jobs.models import Job

    return Job.objects.get(pk=job_id)


def pass_import(env, logs, part, fixture, user, stamp) -> None:
    """An archive imported through a real worker: every sweep stored once with its fit."""
    from numpy.testing import assert_allclose

    from labdb.jobs.models import Job, JobKind
    from labdb.measurements.models import Fit, Sweep

    n, lot = 20, f"W1-{stamp}"
    worker = start_worker("w1", logs[0], env)
    job = submit(make_archive(n, lot, part.part_number, fixture.name), f"{lot}.zip", user)
    done = wait_for("the import job", lambda: job_state(job.pk).finished and job_state(job.pk), 60)
    check("import job finished as done", done.state == "done", f"state {done.state} {done.error}")
    check(
        "import stored every file",
        (done.result.get("stored"), done.result.get("rejected")) == (n, 0),
        f"{done.result.get('stored')} stored, {done.result.get('rejected')} rejected",
    )
    sweeps = Sweep.objects.filter(unit__lot__code=lot)
    check("one sweep per file", sweeps.count() == n, f"{sweeps.count()} sweeps")
    fits = Fit.objects.filter(sweep__in=sweeps)
    check("one fit version per sweep", fits.count() == n and not fits.exclude(version=1).exists())
    # Recovery of the generating CJO (the closed form above; common practice, no source).
    got = sorted(s.current_fit.cjo for s in sweeps.select_related("current_fit"))
    try:
        assert_allclose(got, [(40 + i / 10) * 1e-12 for i in range(n)], rtol=1e-4)
        check("fitted CJO matches the generating values (rtol 1e-4)", True)
    except AssertionError as exc:
        check("fitted CJO matches the generating values (rtol 1e-4)", False, str(exc)[:200])
    lot_id = sweeps.first().unit.lot_id
    recompute = wait_for(
        "the lot recomputation job",
        lambda: Job.objects.filter(
            kind=JobKind.RECOMPUTE_LOTS, params__lot_ids=[lot_id], state="done"
        ).first(),
        60,
    )
    check("the lot was recomputed by a worker", recompute is not None)
    check(
        "the worker finished the import exactly once",
        log_events(logs[:1], "job_finished", job.pk) == 1,
    )

    from django.db import transaction

    from labdb.jobs.services import submit_refit

    with transaction.atomic():
        parent = submit_refit(
            list(sweeps.values_list("pk", flat=True)), model="junction+cp", user=user
        )
    parent = wait_for(
        "the refit job", lambda: job_state(parent.pk).finished and job_state(parent.pk), 90
    )
    check(
        "refit split into chunks and finished",
        parent.state == "done" and parent.result.get("chunks") == 3,
        f"{parent.state} {parent.result}",
    )
    check(
        "refit wrote version 2 of every sweep",
        Fit.objects.filter(sweep__in=sweeps, version=2).count() == n,
    )
    kill_worker(worker, signal.SIGTERM)


def pass_worker_loss(env, logs, part, fixture, user, stamp) -> None:
    """SIGKILL the worker mid-import; after a restart the job completes once, no duplicates."""
    from labdb.measurements.models import Fit, Sweep

    n, lot = 300, f"W2-{stamp}"
    job = submit(make_archive(n, lot, part.part_number, fixture.name), f"{lot}.zip", user)
    worker = start_worker("w2", logs[1], env)
    wait_for("a fifth of the import", lambda: job_state(job.pk).done >= n // 5, 90, every_s=0.05)
    kill_worker(worker)  # worker loss: no warm shutdown, no acknowledgement
    partial = Sweep.objects.filter(unit__lot__code=lot).count()
    killed = job_state(job.pk)
    check(
        "the job was killed mid-way",
        killed.state == "running" and 0 < partial < n,
        f"state {killed.state}, {partial} of {n} stored",
    )

    start_worker("w3", logs[2], env)
    done = wait_for(
        "the resumed import", lambda: job_state(job.pk).finished and job_state(job.pk), 120
    )
    check("the resumed job finished as done", done.state == "done", f"{done.state} {done.error}")
    check("it took a second attempt", done.attempts == 2, f"attempts {done.attempts}")
    check(
        "files stored before the kill came back as duplicates",
        (done.result.get("stored"), done.result.get("duplicate"), done.result.get("rejected"))
        == (n - partial, partial, 0),
        f"{done.result.get('stored')}/{done.result.get('duplicate')}",
    )
    sweeps = Sweep.objects.filter(unit__lot__code=lot)
    check(
        "no duplicate sweeps",
        sweeps.count() == n and sweeps.values("raw_sha256").distinct().count() == n,
        f"{sweeps.count()} sweeps",
    )
    fits = Fit.objects.filter(sweep__in=sweeps)
    check(
        "no duplicate fit versions",
        fits.count() == n and not fits.exclude(version=1).exists(),
        f"{fits.count()} fits",
    )
    finished = log_events(logs, "job_finished", job.pk)
    claimed = log_events(logs, "job_claimed", job.pk)
    check("completed exactly once across both workers", finished == 1, f"{finished} finishes")
    check("claimed once per worker", claimed == 2, f"{claimed} claims")


def main() -> int:
    started = time.monotonic()
    with tempfile.TemporaryDirectory(prefix="labdb-worker-") as media:
        env = setup_environment(media)
        import django

        django.setup()
        import redis
        from django.contrib.auth import get_user_model

        from labdb.catalog.models import Part
        from labdb.measurements.models import Fixture

        # Old messages would name job ids of an earlier database: start from an empty queue.
        redis.Redis.from_url(os.environ["CELERY_BROKER_URL"]).flushdb()
        stamp = time.strftime("%H%M%S")
        part, _ = Part.objects.get_or_create(part_number="CI-WORKER", defaults={"kind": "varactor"})
        fixture, _ = Fixture.objects.get_or_create(name="ci meter", defaults={"kind": "meter"})
        user, _ = get_user_model().objects.get_or_create(username="ci-worker")
        logs = [Path(media) / f"w{i}.log" for i in (1, 2, 3)]
        try:
            pass_import(env, logs, part, fixture, user, stamp)
            pass_worker_loss(env, logs, part, fixture, user, stamp)
        except TimeoutError as exc:
            check("finished within its deadlines", False, str(exc))
        finally:
            for proc in WORKERS:
                if proc.poll() is None:
                    kill_worker(proc)
            failed = [r for r in RESULTS if not r[1]]
            if failed:
                for path in logs:
                    if path.exists():
                        print(f"--- last lines of {path.name}")
                        print("\n".join(path.read_text(errors="replace").splitlines()[-15:]))
    passed = sum(ok for _, ok, _ in RESULTS)
    print(f"worker checks took {time.monotonic() - started:.0f} s")
    print(f"{passed} passed, {len(RESULTS) - passed} failed")
    return 0 if passed == len(RESULTS) else 1


if __name__ == "__main__":
    sys.exit(main())
