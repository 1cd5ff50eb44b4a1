"""Benchmark: bulk import of generated 41-point C–V files, end to end (parse, fit, store).

Runs `import_sweeps` on N generated files into a fresh SQLite file and a fresh PostgreSQL
database, and the per-file page path (the upload page via Django's test client) on a subset,
each in its own process so settings read the right DATABASE_URL. Prints files/s and the
machine. Usage: python bench/bench_import.py [--n 10000] [--page-n 200] [--no-postgres]
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from support.machine import describe

ROOT = Path(__file__).resolve().parent.parent
PG_ADMIN = "postgres://postgres@127.0.0.1:5432/postgres"
PG_URL = "postgres://postgres@127.0.0.1:5432/labdb_bench_import"


def write_files(folder: Path, n: int) -> None:
    import numpy as np

    sys.path.insert(0, str(ROOT))
    from labdb.physics import junction_capacitance

    rng = np.random.default_rng(7)
    v = np.linspace(0, 20, 41)
    for i in range(n):
        lot, unit = f"B{i // 100:03d}", f"U{i % 100:02d}"
        c = junction_capacitance(v, 50e-12 * (1 + 0.02 * rng.standard_normal()), 0.7, 0.5)
        c = c * (1 + 0.002 * rng.standard_normal(v.size))
        head = (
            f"# part: BENCH-1\n# lot: {lot}\n# unit: {unit}\n# fixture: bench meter\n"
            "# temperature: 25 °C\n# illumination: dark\n# measured at: 2026-01-01T00:00:00+00:00\n"
            "bias (V),C (pF)\n"
        )
        body = "".join(f"{a:.3f},{b * 1e12:.5f}\n" for a, b in zip(v, c, strict=True))
        (folder / f"f{i:05d}.csv").write_text(head + body)


def worker(db_url: str, folder: Path, page_n: int) -> dict:
    os.environ["DATABASE_URL"] = db_url
    os.environ.setdefault("SECRET_KEY", "bench-only")
    os.environ["LOG_LEVEL"] = "WARNING"
    os.environ["ALLOWED_HOSTS"] = "testserver"
    sys.path.insert(0, str(ROOT))
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labdb.settings")
    import django

    django.setup()
    from django.conf import settings
    from django.core.management import call_command

    settings.MEDIA_ROOT = tempfile.mkdtemp(prefix="labdb-bench-media-")
    # No collectstatic here: serve static names unhashed, as the test suite does.
    settings.STORAGES = {
        "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
        "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"},
    }
    call_command("migrate", verbosity=0)
    from labdb.accounts.services import ensure_user
    from labdb.catalog.models import Part
    from labdb.measurements.models import Fixture, Sweep

    Part.objects.get_or_create(
        part_number="BENCH-1", defaults={"kind": "varactor", "rated_reverse_v": 30}
    )
    Fixture.objects.get_or_create(name="bench meter", defaults={"kind": "meter"})
    from labdb.measurements.services import SweepContext, import_files
    from labdb.quality.hooks import lots_changed

    files = sorted(folder.glob("*.csv"))
    # The import_sweeps command's own path, timed in two parts: parse + convert + fit +
    # store, then the lot recomputation the command runs once at the end.
    t0 = time.perf_counter()
    outcomes = import_files(
        ((p.read_bytes(), str(p), SweepContext()) for p in files), recompute=False
    )
    t1 = time.perf_counter()
    lots_changed({o.sweep.unit.lot_id for o in outcomes if o.status == "stored"})
    t2 = time.perf_counter()
    bulk_s, with_quality_s = t1 - t0, t2 - t0
    stored = Sweep.objects.count()

    # Per-file page path: the upload page, one file a request, new units so nothing is a duplicate.
    from django.test import Client

    user = ensure_user("bench", "member", "bench-pw")
    client = Client()
    client.force_login(user)
    sample = files[:page_n]
    t0 = time.perf_counter()
    for path in sample:
        data = path.read_bytes().replace(b"# unit: U", b"# unit: P")
        from django.core.files.uploadedfile import SimpleUploadedFile

        r = client.post(
            "/upload/",
            {"files": SimpleUploadedFile(path.name, data), "store": "1", "model": "auto"},
        )
        assert r.status_code == 200, r.status_code
    page_s = time.perf_counter() - t0
    return {
        "files": len(files),
        "stored": stored,
        "bulk_files_per_s": len(files) / bulk_s,
        "with_quality_files_per_s": len(files) / with_quality_s,
        "page_files_per_s": len(sample) / page_s if sample else None,
        "page_n": len(sample),
    }


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=int, default=10000)
    ap.add_argument("--page-n", type=int, default=200)
    ap.add_argument("--no-postgres", action="store_true")
    ap.add_argument("--worker", nargs=2, metavar=("DB_URL", "FOLDER"))
    args = ap.parse_args()
    if args.worker:
        print(json.dumps(worker(args.worker[0], Path(args.worker[1]), args.page_n)))
        return
    print(f"machine: {describe()}")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "files"
        folder.mkdir()
        write_files(folder, args.n)
        targets = [("SQLite", f"sqlite:///{tmp}/bench.sqlite3")]
        if not args.no_postgres:
            subprocess.run(
                ["psql", PG_ADMIN, "-qc", "DROP DATABASE IF EXISTS labdb_bench_import"], check=True
            )
            subprocess.run(
                ["psql", PG_ADMIN, "-qc", "CREATE DATABASE labdb_bench_import"], check=True
            )
            targets.append(("PostgreSQL", PG_URL))
        print(
            f"{'database':<11} {'files':>6} {'import files/s':>15} {'+ lot recompute':>16} "
            f"{'upload page files/s':>20}"
        )
        for name, url in targets:
            out = subprocess.run(
                [
                    sys.executable,
                    __file__,
                    "--worker",
                    url,
                    str(folder),
                    "--page-n",
                    str(args.page_n),
                ],
                check=True,
                capture_output=True,
                text=True,
            )
            r = json.loads(out.stdout.strip().splitlines()[-1])
            assert r["stored"] == r["files"], r
            print(
                f"{name:<11} {r['files']:>6} {r['bulk_files_per_s']:>15.0f} "
                f"{r['with_quality_files_per_s']:>16.0f} "
                f"{r['page_files_per_s']:>20.1f}  (page path on {r['page_n']} files)"
            )
    print("target: ≥ 300 files/s end to end (parse + convert + fit + store)")


if __name__ == "__main__":
    main()
