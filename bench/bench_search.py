"""Search and tank finder at a million unit fits on PostgreSQL, beside a naive Python loop.

Usage (from the repository root):

    .venv/bin/python bench/bench_search.py            # generates once, then reuses

The database is postgres://postgres@127.0.0.1:5432/labdb_bench_search (created when
missing), or DATABASE_URL when it names a database with "bench" in its name: generating
empties the catalogue tables. Targets
(issue 6): swing-window search p95 ≤ 100 ms, tank finder p95 ≤ 500 ms over 50 random
queries each. The naive loop fetches the unit fits of a fraction of the parts and does the
same query in plain Python (lot medians, swing, grouping, ranking); its time is scaled up by
the inverse of that fraction, and its answers are checked against the database search on
the same subset.
"""

from __future__ import annotations

import argparse
import math
import os
import platform
import statistics
import sys
import time
from collections import defaultdict
from pathlib import Path

import numpy as np
from support.machine import cpu_model
from support.pg import ensure_database, settle

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "bench" / "datasets"))
DEFAULT_URL = "postgres://postgres@127.0.0.1:5432/labdb_bench_search"


def bench_database_url() -> str:
    """DATABASE_URL if it names a benchmark database, else the default one.

    The generator empties the catalogue tables, so it never touches a database whose name
    does not say it is for benchmarks (a CI or lab database set in the environment).
    """
    url = os.environ.get("DATABASE_URL", "")
    name = url.rsplit("/", 1)[-1].split("?", 1)[0]
    if url.startswith("postgres") and "bench" in name:
        return url
    if url:
        print(f"bench_search: DATABASE_URL names no benchmark database; using {DEFAULT_URL}")
    return DEFAULT_URL


os.environ["DATABASE_URL"] = bench_database_url()
os.environ.setdefault("SECRET_KEY", "bench-only-key-not-secret")
os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labdb.settings")
os.environ.setdefault("LOG_LEVEL", "WARNING")

SEED = 6


def p95(xs):
    return float(np.percentile(xs, 95))


def machine() -> str:
    from django.db import connection

    with connection.cursor() as c:
        c.execute("SELECT version()")
        db = c.fetchone()[0].split(" on ")[0]
    t0 = time.process_time()
    sum(range(10**7))  # a fixed amount of work, so slower machines can be compared
    calib = time.process_time() - t0
    return (
        f"{platform.node()} · {cpu_model()} · {os.cpu_count()} cores · Python "
        f"{platform.python_version()} · {db} · load average {os.getloadavg()[0]:.1f} · "
        f"sum(range(1e7)) takes {calib:.2f} s CPU"
    )


def search_queries(rng, n):
    from labdb.search.queries import SearchQuery

    out = []
    for _ in range(n):
        v1 = float(rng.choice([0.0, 0.5, 1.0, 2.0]))
        v2 = float(np.round(rng.uniform(3.0, 25.0) * 2) / 2)
        lots = str(rng.choice(["every", "every", "every", "latest", "since"]))
        since = None
        if lots == "since":
            import datetime as dt

            since = dt.date(2021, 1, 1) + dt.timedelta(days=int(rng.integers(0, 1200)))
        out.append(
            SearchQuery(
                v1_v=v1,
                v2_v=v2,
                min_swing=float(np.round(rng.uniform(1.3, 4.0), 2)),
                kind=str(rng.choice(["", "", "varactor", "led"])),
                lots=lots,
                since=since,
            )
        )
    return out


def tank_queries(rng, n):
    from labdb.search.queries import TankQuery

    out = []
    for _ in range(n):
        big_l = float(np.exp(rng.uniform(np.log(1e-6), np.log(50e-6))))
        fixed = float(rng.uniform(0, 30e-12))
        c_mid = float(np.exp(rng.uniform(np.log(5e-12), np.log(100e-12))))
        f_c = 1 / (2 * math.pi * math.sqrt(big_l * (fixed + c_mid)))
        half = float(rng.uniform(0.01, 0.08))
        vmax = float(rng.choice([3.3, 5.0, 9.0, 12.0]))
        out.append(
            TankQuery(
                inductance_h=big_l,
                fixed_f=fixed,
                coupling_f=None if rng.random() < 0.7 else 100e-12,
                f_low_hz=f_c * (1 - half),
                f_high_hz=f_c * (1 + half),
                bias_min_v=float(rng.choice([0.0, 0.5])),
                bias_max_v=vmax,
                kind=str(rng.choice(["", "", "varactor"])),
            )
        )
    return out


def timed(fn, queries):
    out, times = [], []
    for q in queries:
        t0 = time.perf_counter()
        out.append(fn(q))
        times.append(time.perf_counter() - t0)
    return out, times


# --- the naive way: fetch unit fits and do everything in Python --------------------------


def fetch_fits(part_ids):
    from labdb.measurements.models import Sweep

    return list(
        Sweep.objects.filter(
            unit__lot__part_id__in=part_ids,
            illumination="dark",
            temperature_c__gte=20,
            temperature_c__lte=30,
            current_fit__isnull=False,
        ).values_list(
            "unit__lot_id",
            "unit__lot__part_id",
            "unit__lot__part__kind",
            "unit__lot__received_on",
            "current_fit__cjo",
            "current_fit__vj",
            "current_fit__m",
            "current_fit__cp",
            "bias_min_v",
            "bias_max_v",
        )
    )


def _c(v, cjo, vj, m, cp):
    return cjo * math.pow(1.0 + v / vj, -m) + cp


def _lots(fits, kind):
    lots = defaultdict(list)
    for f in fits:
        if not kind or f[2] == kind:
            lots[f[0]].append(f)
    return lots


def naive_search(fits, q):
    latest = {}
    lots = _lots(fits, q.kind)
    for lot_id, fs in lots.items():
        pid, rec = fs[0][1], fs[0][3]
        if q.lots == "since" and rec < q.since:
            continue
        if pid not in latest or (rec, lot_id) > latest[pid]:
            latest[pid] = (rec, lot_id)
    worst = {}
    for lot_id, fs in lots.items():
        pid, rec = fs[0][1], fs[0][3]
        if q.lots == "since" and rec < q.since:
            continue
        if q.lots == "latest" and latest[pid][1] != lot_id:
            continue
        med = [statistics.median(f[i] for f in fs) for i in (4, 5, 6, 7)]
        if max(f[8] for f in fs) > q.v1_v + 1e-6 or min(f[9] for f in fs) < q.v2_v - 1e-6:
            continue
        swing = _c(q.v1_v, *med) / _c(q.v2_v, *med)
        worst[pid] = min(worst.get(pid, math.inf), swing)
    hits = [(s, pid) for pid, s in worst.items() if s >= q.min_swing]
    return [pid for s, pid in sorted(hits, key=lambda t: (-t[0], t[1]))]


def naive_tank(fits, q):
    k_lo = 1 / ((2 * math.pi * q.f_low_hz) ** 2 * q.inductance_h)
    k_hi = 1 / ((2 * math.pi * q.f_high_hz) ** 2 * q.inductance_h)

    def branch(c):
        return c if q.coupling_f is None else c * q.coupling_f / (c + q.coupling_f)

    worst, covering_units = {}, 0
    for fs in _lots(fits, q.kind).values():
        pid = fs[0][1]
        if (
            max(f[8] for f in fs) > q.bias_min_v + 1e-6
            or min(f[9] for f in fs) < q.bias_max_v - 1e-6
        ):
            continue
        for f in fs:  # every unit's coverage, as a loop over all fits would
            ca = q.fixed_f + branch(_c(q.bias_min_v, *f[4:8]))
            cb = q.fixed_f + branch(_c(q.bias_max_v, *f[4:8]))
            covering_units += ca >= k_lo and cb <= k_hi
        med = [statistics.median(f[i] for f in fs) for i in (4, 5, 6, 7)]
        ca = q.fixed_f + branch(_c(q.bias_min_v, *med))
        cb = q.fixed_f + branch(_c(q.bias_max_v, *med))
        margin = math.sqrt(min(ca / k_lo, k_hi / cb))
        worst[pid] = min(worst.get(pid, math.inf), margin)
    return sorted(worst, key=lambda pid: (-worst[pid], pid))[: q.max_parts]


def page_times(queries):
    from django.contrib.auth.models import Group, User
    from django.test import Client, override_settings
    from django.test.utils import setup_test_environment

    setup_test_environment()
    # Pages link their CSS through static(); time the page, not a missing collectstatic.
    plain = override_settings(
        STORAGES={
            "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
            "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"},
        }
    )
    plain.enable()
    user, _ = User.objects.get_or_create(username="bench-viewer")
    user.groups.add(Group.objects.get(name="viewer"))
    client = Client()
    client.force_login(user)
    times = []
    for q in queries:
        url = (
            f"/search/?v1={q.v1_v}&v2={q.v2_v}&min_swing={q.min_swing}&kind={q.kind}"
            f"&lots={q.lots}" + (f"&since={q.since}" if q.since else "")
        )
        t0 = time.perf_counter()
        r = client.get(url)
        times.append(time.perf_counter() - t0)
        assert r.status_code == 200, (url, r.status_code)
    return times


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--parts", type=int, default=10_000)
    ap.add_argument("--lots", type=int, default=10)
    ap.add_argument("--units", type=int, default=10)
    ap.add_argument("--queries", type=int, default=50)
    ap.add_argument("--naive-fraction", type=float, default=0.1)
    ap.add_argument("--regenerate", action="store_true")
    ap.add_argument("--generate-only", action="store_true")
    args = ap.parse_args()

    if not ensure_database(os.environ["DATABASE_URL"], "bench_search"):
        print("bench_search: skipped")
        return
    import django

    django.setup()
    import search_catalogue as data
    from django.core.management import call_command
    from django.db import connection

    from labdb.search.services import find_tanks, search_parts

    if connection.vendor != "postgresql":
        sys.exit("bench_search: set DATABASE_URL to a PostgreSQL database")
    call_command("migrate", verbosity=0)
    n_fits = args.parts * args.lots * args.units
    if args.regenerate or not data.is_generated(args.parts, args.lots, args.units):
        secs = data.generate(args.parts, args.lots, args.units)
        print(
            f"generated {args.parts} parts × {args.lots} lots × {args.units} units "
            f"({n_fits:,} unit fits) in {secs:.0f} s"
        )
    else:
        print(f"reusing the generated {n_fits:,} unit fits")
    if args.generate_only:
        return

    rng = np.random.default_rng(SEED)
    sq, tq = search_queries(rng, args.queries), tank_queries(rng, args.queries)
    with connection.cursor() as cursor:
        settled = settle(cursor)
    search_parts(sq[0]), find_tanks(tq[0])  # warm caches and connections
    # As the web server does at start-up (labdb/wsgi.py): without it, Python's full garbage
    # collections walk the whole start-up heap, ~80 ms each, inside whichever query runs.
    from labdb.runtime import freeze_startup_heap

    frozen = freeze_startup_heap()
    pages, s_times = timed(search_parts, sq)
    tanks, t_times = timed(find_tanks, tq)
    # The database stage alone (one grouped pass), to show where a search spends its time.
    from labdb.search.parts import rank_parts

    _, r_times = timed(rank_parts, sq)

    # Naive loop on a subset of parts, scaled to the whole catalogue.
    n_sub = max(1, int(args.parts * args.naive_fraction))
    sub_ids = list(range(1, n_sub + 1))
    t0 = time.perf_counter()
    fits = fetch_fits(sub_ids)
    fetch_s = (time.perf_counter() - t0) / args.naive_fraction
    _, ns_times = timed(lambda q: naive_search(fits, q), sq)
    _, nt_times = timed(lambda q: naive_tank(fits, q), tq)
    scale = 1 / args.naive_fraction
    ns_times = [t * scale + fetch_s for t in ns_times]
    nt_times = [t * scale + fetch_s for t in nt_times]

    # Do the two agree? Database search restricted to the same parts by a part-number prefix.
    from dataclasses import replace

    agree, prefix = None, ""
    if n_sub in (10**k for k in range(1, 6)) and n_sub < args.parts:
        prefix = data.PREFIX + "0" * (5 - len(str(n_sub)) + 1)  # numbers 1 … n_sub − 1
        same = 0
        for q in sq:
            db = search_parts(replace(q, text=prefix, per_page=100, page=1))
            want = [p for p in naive_search(fits, q) if p < n_sub]
            got = [h.part_id for h in db.hits]
            same += got == want[:100] and db.total == len(want)
        agree = same

    print(f"machine: {machine()}")
    print(
        f"start-up heap frozen as the web server does ({frozen:,} objects; labdb.runtime); "
        f"server settled for {settled:.1f} s (checkpoint, autovacuum done)"
    )
    print(
        f"search_parts, {len(sq)} random swing-window queries: median "
        f"{statistics.median(s_times) * 1e3:.1f} ms, p95 {p95(s_times) * 1e3:.1f} ms "
        f"(target ≤ 100 ms); parts found per query: median "
        f"{statistics.median(p.total for p in pages):.0f}; of which the ranking pass alone: "
        f"median {statistics.median(r_times) * 1e3:.1f} ms, p95 {p95(r_times) * 1e3:.1f} ms"
    )
    print(
        f"find_tanks, {len(tq)} random tanks: median {statistics.median(t_times) * 1e3:.1f} ms,"
        f" p95 {p95(t_times) * 1e3:.1f} ms (target ≤ 500 ms); queries with a covering lot: "
        f"{sum(1 for t in tanks if not t.refusal)}"
    )
    print(
        f"naive Python loop (fetch + loop over {len(fits):,} fits of {n_sub} parts, scaled "
        f"×{scale:g}): search median {statistics.median(ns_times):.2f} s, p95 "
        f"{p95(ns_times):.2f} s; tank median {statistics.median(nt_times):.2f} s, p95 "
        f"{p95(nt_times):.2f} s (fetch alone {fetch_s:.2f} s)"
    )
    print(
        f"ratio naive/database (medians): search ×{statistics.median(ns_times) / statistics.median(s_times):.0f}, "
        f"tank ×{statistics.median(nt_times) / statistics.median(t_times):.0f}"
    )
    if agree is not None:
        print(f"database and naive answers agree on {agree}/{len(sq)} searches (parts {prefix}…)")
    s_page = page_times(sq[:20])
    print(
        f"search page /search/ (Django test client, {len(s_page)} queries): median "
        f"{statistics.median(s_page) * 1e3:.1f} ms, p95 {p95(s_page) * 1e3:.1f} ms"
    )


if __name__ == "__main__":
    main()
