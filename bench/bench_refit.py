"""Benchmark of refit throughput: inline in one process vs 2 Celery workers.

Plain script (``python bench/bench_refit.py [--sweeps N]``); prints the machine and a table.
Needs PostgreSQL on 127.0.0.1:5432 (database ``labdb_bench_refit`` is dropped and created)
and Redis on 127.0.0.1:6379 (database 14 is flushed); without them it says so and exits 0.

Sweeps are bulk-inserted without fits (41 points each, seeded random junction parameters
with 0.2 % noise), so each refit writes version 1: a fit, a row lock, an insert and an
update per sweep, as ``manage.py refit`` does. Both modes use the same database server.
The inline figure excludes the lot recomputation refit_sweeps triggers at the end (timed
apart); in the worker run the parent job is done before the queued recomputation starts.
The issue asks for 100,000 sweeps; the default measures 2,000 per mode and scales
linearly to 100,000 (the per-sweep cost does not depend on the table size at this scale),
and says so in the output. ``--sweeps 100000`` runs the full size (several hours here).
"""

from __future__ import annotations

import argparse
import hashlib
import os
import platform
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from support.machine import cpu_model  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

DB_NAME = "labdb_bench_refit"
PG = "postgres://postgres@127.0.0.1:5432"
BROKER = "redis://127.0.0.1:6379/14"
TARGET = 100_000
N_POINTS = 41


def services_ready() -> str | None:
    try:
        import psycopg
        import redis

        with psycopg.connect(f"{PG}/postgres", autocommit=True, connect_timeout=3) as conn:
            conn.execute(f"DROP DATABASE IF EXISTS {DB_NAME}")
            conn.execute(f"CREATE DATABASE {DB_NAME}")
        redis.Redis.from_url(BROKER, socket_connect_timeout=3).flushdb()
    except Exception as exc:  # the benchmark is optional where the services are missing
        return f"{type(exc).__name__}: {exc}"
    return None


def generate(n: int, lot_code: str, seed: int) -> list[int]:
    """Bulk-insert ``n`` sweeps (no fits) into a new lot; returns their ids."""
    import numpy as np

    from labdb.catalog.models import Lot, Part, Unit
    from labdb.measurements.models import Fixture, Sweep
    from labdb.measurements.services import points_hash
    from labdb.physics import junction_capacitance

    part, _ = Part.objects.get_or_create(part_number="BENCH-V", defaults={"kind": "varactor"})
    fixture, _ = Fixture.objects.get_or_create(name="bench meter", defaults={"kind": "meter"})
    lot = Lot.objects.create(part=part, code=lot_code)
    rng = np.random.default_rng(seed)
    v = np.linspace(0.0, 20.0, N_POINTS)
    units = Unit.objects.bulk_create([Unit(lot=lot, label=f"U{i:06d}") for i in range(n)])
    rows = []
    for i, unit in enumerate(units):
        cjo, vj, m = rng.uniform(20e-12, 80e-12), rng.uniform(0.5, 1.0), rng.uniform(0.3, 0.6)
        c = junction_capacitance(v, cjo, vj, m) * (1 + 0.002 * rng.standard_normal(N_POINTS))
        sha = hashlib.sha256(f"{lot_code}-{i}".encode()).hexdigest()
        rows.append(
            Sweep(
                unit=unit,
                fixture=fixture,
                kind="cv",
                raw_file=f"raw/bench/{sha}.csv",
                raw_name=f"{i}.csv",
                raw_sha256=sha,
                raw_size=1,
                points={"bias_v": v.tolist(), "capacitance_f": c.tolist()},
                points_sha256=points_hash(v, c),
                n_points=N_POINTS,
                bias_min_v=0.0,
                bias_max_v=20.0,
            )
        )
    Sweep.objects.bulk_create(rows, batch_size=2000)
    return list(Sweep.objects.filter(unit__lot=lot).values_list("pk", flat=True))


def run_inline(ids: list[int]) -> tuple[float, float]:
    """Seconds for refit_sweeps in this process, and for the lot recomputation after it."""
    import labdb.quality.hooks as hooks
    from labdb.measurements.services import refit_sweeps

    real, lots = hooks.lots_changed, []
    hooks.lots_changed = lots.extend  # timed apart, below
    try:
        t0 = time.perf_counter()
        summary = refit_sweeps(ids, model="auto", origin="refit")
        t_refit = time.perf_counter() - t0
    finally:
        hooks.lots_changed = real
    assert summary.new_versions + len(summary.failed) == len(ids), summary.as_rows()
    t0 = time.perf_counter()
    real(lots)
    return t_refit, time.perf_counter() - t0


def run_workers(ids: list[int], env: dict[str, str], logdir: Path) -> float:
    """Seconds from submitting one refit job until all its chunks are done on 2 workers."""
    from django.db import transaction

    from labdb.jobs.models import Job
    from labdb.jobs.services import submit_refit

    procs = []
    for name in ("b1", "b2"):
        log = logdir / f"{name}.log"
        procs.append(
            subprocess.Popen(
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
                    "--loglevel=WARNING",
                ],
                cwd=ROOT,
                env=env,
                stdout=open(log, "wb"),
                stderr=subprocess.STDOUT,
                start_new_session=True,
            )
        )
    time.sleep(8)  # both workers up before the clock starts
    try:
        t0 = time.perf_counter()
        with transaction.atomic():
            parent = submit_refit(ids, model="auto")
        while True:
            parent.refresh_from_db()
            if parent.state in ("done", "failed"):
                break
            time.sleep(0.2)
        elapsed = time.perf_counter() - t0
    finally:
        for p in procs:
            os.killpg(p.pid, signal.SIGTERM)
        for p in procs:
            p.wait(timeout=60)
    assert parent.state == "done", parent.error
    assert Job.objects.filter(parent=parent, state="done").count() == parent.result["chunks"]
    return elapsed


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sweeps", type=int, default=2_000, help="sweeps per mode")
    args = ap.parse_args()
    print("bench_refit: refit throughput, inline vs 2 Celery workers")
    print(f"machine: {cpu_model()}, {os.cpu_count()} cores, Python {platform.python_version()}")
    problem = services_ready()
    if problem:
        print(f"skipped: needs PostgreSQL and Redis on 127.0.0.1 ({problem})")
        return 0
    env = {
        **os.environ,
        "DJANGO_SETTINGS_MODULE": "labdb.settings",
        "SECRET_KEY": os.environ.get("SECRET_KEY") or "bench-only-not-a-secret",
        "DEBUG": "0",
        "LOG_LEVEL": "WARNING",
        "DATABASE_URL": f"{PG}/{DB_NAME}",
        "CELERY_BROKER_URL": BROKER,
        "JOB_REFIT_CHUNK": "500",
    }
    os.environ.update(env)
    import django

    django.setup()
    from django.core.management import call_command

    call_command("migrate", verbosity=0)
    n = args.sweeps
    t0 = time.perf_counter()
    ids_inline = generate(n, "INLINE", seed=1)
    ids_workers = generate(n, "WORKERS", seed=2)
    print(f"generated 2 × {n} sweeps by bulk insert in {time.perf_counter() - t0:.1f} s")
    t_inline, t_recompute = run_inline(ids_inline)
    with tempfile.TemporaryDirectory() as logs:
        t_workers = run_workers(ids_workers, env, Path(logs))
    scale = TARGET / n
    print()
    print(f"{'mode':<22} {'sweeps':>8} {'seconds':>9} {'sweeps/s':>9} {'est. s for 100k':>16}")
    for label, t in (("inline (1 process)", t_inline), ("2 Celery workers", t_workers)):
        print(f"{label:<22} {n:>8} {t:>9.1f} {n / t:>9.0f} {t * scale:>16.0f}")
    print(f"lot recomputation after the inline refit: {t_recompute:.1f} s (not in the figure)")
    print(f"speed-up with 2 workers: {t_inline / t_workers:.2f}×")
    if n != TARGET:
        print(f"note: measured on {n} sweeps per mode and scaled ×{scale:g} to 100,000")
    return 0


if __name__ == "__main__":
    sys.exit(main())
