"""Benchmark of the quality service: a part with 200 lots × 25 units, full and one-lot recomputation.

Usage (from the repository root)::

    .venv/bin/python bench/bench_quality.py

Without DATABASE_URL it uses labdb_bench_quality on the local PostgreSQL server (created
when missing), or a throw-away SQLite file when no server answers. The database is migrated, an
earlier bench part is removed, and a generated part is bulk-inserted: 200 lots of 25 units,
one 41-point C–V sweep per unit (seeded junction parameters, 1.4 % unit spread, 0.25 %
reading noise) with a current fit holding the generating parameters, as a perfect fitter
would write it — this measures the quality service, not import or fitting. One lot drifts
and a few units stand out, so flags are written too.

Timed: the full recomputation of the part from nothing (summaries, shape checks from the
points, lot-model fits, between-lot judgement, flags; target ≤ 2 s on PostgreSQL), a second
run with nothing changed, a forced rebuild of every summary, and the evaluation of one new
lot of 25 units through the hook's entry point (target ≤ 200 ms; 5 new lots). Each figure
is given as best and median wall time over the runs, with this process's CPU time beside it
(the database server's work is in the wall time only); the machine's load average is
printed because other work on a small machine moves wall times a lot.
"""

from __future__ import annotations

import argparse
import hashlib
import os
import platform
import statistics
import sys
import tempfile
import time
from datetime import date, timedelta
from pathlib import Path

from support.machine import cpu_model  # noqa: E402
from support.pg import ensure_database  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

PART = "BENCH-Q-1"
PG_URL = "postgres://postgres@127.0.0.1:5432/labdb_bench_quality"
N_POINTS = 41
SEED = 20261202


def setup_django() -> None:
    os.environ.setdefault("SECRET_KEY", "bench-only-key-not-secret")
    os.environ.setdefault("DEBUG", "0")
    if not os.environ.get("DATABASE_URL"):
        # The target is for PostgreSQL: the local server when it answers, else SQLite.
        if ensure_database(PG_URL, "bench_quality"):
            os.environ["DATABASE_URL"] = PG_URL
        else:
            tmp = Path(tempfile.mkdtemp(prefix="labdb-bench-quality-"))
            os.environ["DATABASE_URL"] = f"sqlite:///{tmp / 'bench.sqlite3'}"
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labdb.settings")
    import django

    django.setup()
    from django.core.management import call_command

    call_command("migrate", verbosity=0)


def remove_part() -> None:
    """Delete an earlier bench part; fits and sweeps are protected, so children go first."""
    from labdb.catalog.models import Lot, Part, Unit
    from labdb.measurements.models import Fit, Sweep
    from labdb.quality.models import Flag, LotSummary

    part = Part.objects.filter(part_number=PART).first()
    if part is None:
        return
    Sweep.objects.filter(unit__lot__part=part).update(current_fit=None)
    Fit.objects.filter(sweep__unit__lot__part=part).delete()
    Flag.objects.filter(part=part).delete()
    LotSummary.objects.filter(lot__part=part).delete()
    Sweep.objects.filter(unit__lot__part=part).delete()
    Unit.objects.filter(lot__part=part).delete()
    Lot.objects.filter(part=part).delete()
    part.delete()


def insert_lots(
    part, fixture, codes, first_day: date, rng, n_units: int, drift: dict, outliers: set
) -> list:
    """Bulk-insert lots, units, sweeps and current fits; returns the lots."""
    import numpy as np
    from django.db.models import OuterRef, Subquery

    from labdb.catalog.models import Lot, Unit
    from labdb.measurements.models import Fit, Sweep
    from labdb.measurements.services import points_hash
    from labdb.physics import FITTER_VERSION, junction_capacitance

    lots = Lot.objects.bulk_create(
        [
            Lot(part=part, code=c, received_on=first_day + timedelta(days=7 * i))
            for i, c in enumerate(codes)
        ]
    )
    units = Unit.objects.bulk_create(
        [Unit(lot=lot, label=f"U{k + 1:02d}") for lot in lots for k in range(n_units)]
    )
    v = np.linspace(0.0, 20.0, N_POINTS)
    sweeps, params = [], []
    for i, unit in enumerate(units):
        lot_i, k = divmod(i, n_units)
        off = 1.0 + 0.003 * rng.standard_normal() + drift.get(codes[lot_i], 0.0)
        cjo = (
            51e-12
            * off
            * (1 + 0.014 * rng.standard_normal())
            * (0.7 if (codes[lot_i], k) in outliers else 1.0)
        )
        vj = 0.72 * (1 + 0.006 * rng.standard_normal())
        m = 0.54 * (1 + 0.006 * rng.standard_normal())
        c = junction_capacitance(v, cjo, vj, m) * (1 + 0.0025 * rng.standard_normal(N_POINTS))
        sha = points_hash(v, c)
        raw = hashlib.sha256(f"{unit.pk}:{sha}".encode()).hexdigest()
        sweeps.append(
            Sweep(
                unit=unit,
                fixture=fixture,
                kind="cv",
                raw_file=f"raw/{raw}.csv",
                raw_name="bench.csv",
                raw_sha256=raw,
                raw_size=1,
                points={"bias_v": v.tolist(), "capacitance_f": c.tolist()},
                points_sha256=sha,
                n_points=N_POINTS,
                bias_min_v=0.0,
                bias_max_v=20.0,
            )
        )
        params.append((cjo, vj, m, sha))
    sweeps = Sweep.objects.bulk_create(sweeps, batch_size=1000)
    Fit.objects.bulk_create(
        [
            Fit(
                sweep=s,
                version=1,
                model="junction",
                params={"cjo": cjo, "vj": vj, "m": m},
                stderr={},
                correlation=[],
                cjo=cjo,
                vj=vj,
                m=m,
                cp=0.0,
                rms_rel=0.0025,
                r2=1.0,
                n_points=N_POINTS,
                bias_min_v=0.0,
                bias_max_v=20.0,
                converged=True,
                fitter_version=FITTER_VERSION,
                input_sha256=sha,
                origin="command",
            )
            for s, (cjo, vj, m, sha) in zip(sweeps, params, strict=True)
        ],
        batch_size=1000,
    )
    Sweep.objects.filter(unit__lot__in=lots).update(
        current_fit=Subquery(Fit.objects.filter(sweep=OuterRef("pk")).values("pk")[:1])
    )
    return lots


def timed(fn, *args, **kwargs):
    """(wall seconds, CPU seconds of this process, result)."""
    t0, c0 = time.perf_counter(), time.process_time()
    out = fn(*args, **kwargs)
    return time.perf_counter() - t0, time.process_time() - c0, out


def analyze() -> None:
    """Refresh planner statistics after the bulk load, as autovacuum would on a live server.

    Without it PostgreSQL plans on the empty (or deleted) tables of the previous run and
    scans every sweep to find one lot's 25.
    """
    from django.db import connection

    if connection.vendor == "postgresql":
        with connection.cursor() as cur:
            cur.execute("VACUUM ANALYZE")


def clear_quality(part) -> None:
    """Forget the part's summaries (their lot-model fits go with them) and flags."""
    from labdb.quality.models import Flag, LotSummary

    Flag.objects.filter(part=part).delete()
    LotSummary.objects.filter(lot__part=part).delete()


def row(label: str, runs: list, note: str = "") -> str:
    wall = [r[0] * 1000 for r in runs]
    cpu = [r[1] * 1000 for r in runs]
    return (
        f"  {label:<34}: best {min(wall):6.0f} ms, median {statistics.median(wall):6.0f} ms wall "
        f"(CPU here {statistics.median(cpu):5.0f} ms){note}"
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--lots", type=int, default=200)
    parser.add_argument("--units", type=int, default=25)
    parser.add_argument("--repeat", type=int, default=3, help="runs of each full recomputation")
    args = parser.parse_args()
    setup_django()

    import numpy as np
    import scipy
    from django.db import connection

    from labdb.catalog.models import Part
    from labdb.measurements.models import Fixture
    from labdb.quality.models import Flag, LotSummary
    from labdb.quality.services import recompute_lots, recompute_part

    remove_part()
    # As the web and worker processes do at start-up (labdb/runtime.py).
    from labdb.runtime import freeze_startup_heap

    freeze_startup_heap()
    rng = np.random.default_rng(SEED)
    part = Part.objects.create(
        part_number=PART,
        kind="varactor",
        rated_reverse_v=30.0,
        ref_bias_low_v=1.0,
        ref_bias_high_v=20.0,
    )
    fixture, _ = Fixture.objects.get_or_create(name="bench meter Q", defaults={"kind": "meter"})
    codes = [f"Q{i:04d}" for i in range(args.lots)]
    t_insert, _, _ = timed(
        insert_lots,
        part,
        fixture,
        codes,
        date(2020, 1, 6),
        rng,
        args.units,
        drift={codes[int(args.lots * 0.75)]: 0.10},
        outliers={(codes[i], 3) for i in range(5, args.lots, 40)},
    )
    analyze()
    full = []
    for _ in range(args.repeat):
        clear_quality(part)
        full.append(timed(recompute_part, part))
    again = [timed(recompute_part, part) for _ in range(args.repeat)]
    forced = [timed(recompute_part, part, force=True) for _ in range(args.repeat)]
    new_lot = []
    for j in range(5):
        (lot,) = insert_lots(
            part,
            fixture,
            [f"N{j:03d}"],
            date(2030, 1, 6) + timedelta(days=7 * j),
            rng,
            args.units,
            drift={},
            outliers=set(),
        )
        new_lot.append(timed(recompute_lots, [lot.pk]))

    db = connection.vendor + (
        f" {connection.pg_version // 10000}" if connection.vendor == "postgresql" else ""
    )
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(
        f"bench_quality · {platform.node()} · {cpu_model()} · {os.cpu_count()} cores (load {load:.1f}) · "
        f"Python {platform.python_version()} · numpy {np.__version__} · scipy {scipy.__version__} · {db}"
    )
    print(
        f"  part: {args.lots} lots × {args.units} units, one {N_POINTS}-point sweep each "
        f"(bulk insert {t_insert:.1f} s, not timed below); {args.repeat} runs each"
    )
    r = full[-1][2]
    print(
        row(
            "full recomputation from nothing",
            full,
            f"; target ≤ 2000 ms on PostgreSQL — {r.summarised} summaries, {r.lot_fits} lot fits",
        )
    )
    print(row("second run, nothing changed", again))
    print(row("forced rebuild of every summary", forced))
    print(row(f"one new lot of {args.units} units (5 lots)", new_lot, "; target ≤ 200 ms"))
    active = Flag.objects.filter(part=part, active=True)
    print(
        f"  flags now: {active.filter(unit__isnull=False).count()} on units, "
        f"{active.filter(unit__isnull=True).count()} on lots; summaries {LotSummary.objects.filter(lot__part=part).count()}"
    )
    remove_part()


if __name__ == "__main__":
    main()
