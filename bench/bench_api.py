"""REST API throughput under gunicorn: GET fits/{id}/ and a sweep list, beside a plain view.

Usage (from the repository root): ``.venv/bin/python bench/bench_api.py [--requests N]``

The script builds a throw-away SQLite database in a temporary folder (migrate, one part,
a meter fixture, 40 recorded sweeps with their fits, a read token), starts gunicorn with
2 sync workers on 127.0.0.1 serving labdb plus one bench-only URL — a plain Django view
that returns the same fit as ``fits/{id}/`` with ``JsonResponse`` (no DRF, no auth) — and
drives it with a bounded load generator: a fixed number of requests per endpoint from a
few threads, each endpoint stopped at a time cap. It prints requests/s and p95 latency per
endpoint and the API/plain ratio for the fit (target ≥ 0.5, issue 7).

When gunicorn imports this file (``bench_api:application``) it serves that site instead:
the bench URL exists only in this process, never in labdb's own URL configuration.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import shutil
import socket
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

from support.machine import cpu_model

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

WORKERS = 2
THREADS = 8
PART = "BENCH-API-1"
PLAIN_PATH = "bench/plain/fits/"


# --- the site gunicorn serves (imported as module ``bench_api`` in each worker) -------------


def plain_fit(request, pk: int):
    """The fit as plain Django would serve it: one query, a dict, JsonResponse."""
    from django.http import Http404, JsonResponse

    from labdb.measurements.models import Fit

    try:
        fit = Fit.objects.get(pk=pk)
    except Fit.DoesNotExist:
        raise Http404 from None
    return JsonResponse(
        {
            "id": fit.pk,
            "sweep": fit.sweep_id,
            "version": fit.version,
            "model": fit.model,
            "params": fit.params,
            "stderr": fit.stderr,
            "correlation": fit.correlation,
            "metrics": {
                "rms_rel": fit.rms_rel,
                "r2": fit.r2,
                "aicc": fit.aicc,
                "n_points": fit.n_points,
                "bias_min_v": fit.bias_min_v,
                "bias_max_v": fit.bias_max_v,
            },
            "warnings": fit.warnings,
            "fitter_version": fit.fitter_version,
            "created_at": fit.created_at.isoformat().replace("+00:00", "Z"),
        }
    )


plain_fit.login_required = False  # what login_not_required sets: a baseline without auth


def __getattr__(name: str):
    # Built lazily: only the gunicorn workers need Django set up as a served site.
    if name == "application":
        import django
        from django.conf import settings

        django.setup()
        settings.ROOT_URLCONF = __name__
        from django.core.wsgi import get_wsgi_application

        return get_wsgi_application()
    if name == "urlpatterns":
        from django.urls import include, path

        return [
            path(PLAIN_PATH + "<int:pk>/", plain_fit),
            path("", include("labdb.urls")),
        ]
    raise AttributeError(name)


# --- the driver ------------------------------------------------------------------------------


def prepare(n_sweeps: int) -> tuple[int, str]:
    """Migrate the temporary database and record sweeps; returns (a fit id, a read token)."""
    import django

    django.setup()
    import numpy as np
    from django.contrib.auth.models import Group, User
    from django.core.management import call_command

    from labdb.api.tokens import mint_token
    from labdb.catalog.models import Part
    from labdb.measurements.models import Fixture
    from labdb.measurements.services import SweepContext, record_points
    from labdb.physics import junction_capacitance

    call_command("migrate", verbosity=0)
    Part.objects.create(part_number=PART, kind="varactor", rated_reverse_v=30.0)
    Fixture.objects.create(name="bench meter", kind="meter", test_frequency_hz=1e6)
    rng = np.random.default_rng(7)
    bias = np.linspace(0.0, 20.0, 41)
    fit_id = None
    for i in range(n_sweeps):
        c = junction_capacitance(bias, 47e-12 * (1 + 0.02 * rng.standard_normal()), 0.8, 0.55)
        c = c * (1 + 0.002 * rng.standard_normal(bias.size))
        ctx = SweepContext(part=PART, lot="L1", unit=f"U{i:02d}", fixture="bench meter")
        (out,) = record_points(ctx, bias.tolist(), capacitance_f=c.tolist())
        if out.status != "stored":
            raise SystemExit(f"could not record a bench sweep: {out.problems}")
        fit_id = out.fit.pk
    user = User.objects.create_user("bench-reader")
    user.groups.add(Group.objects.get(name="viewer"))
    _, key = mint_token(user, "read", name="bench")
    return fit_id, key


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def wait_until_up(url: str, timeout_s: float = 60.0) -> None:
    import requests

    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        try:
            if requests.get(url, timeout=10).status_code == 200:
                return
        except requests.RequestException:  # not listening yet, or still importing labdb
            pass
        time.sleep(0.2)
    raise SystemExit(f"gunicorn did not answer {url} within {timeout_s:.0f} s")


def load(url: str, headers: dict, n_requests: int, threads: int, cap_s: float) -> dict:
    """``n_requests`` GETs from ``threads`` threads, stopped at ``cap_s`` seconds."""
    import requests

    latencies: list[float] = []
    failures: list[int] = []
    lock = threading.Lock()
    remaining = [n_requests]
    deadline = time.monotonic() + cap_s

    def worker():
        session = requests.Session()
        while True:
            with lock:
                if remaining[0] <= 0 or time.monotonic() > deadline:
                    return
                remaining[0] -= 1
            t0 = time.perf_counter()
            status = session.get(url, headers=headers, timeout=30).status_code
            dt = time.perf_counter() - t0
            with lock:
                (latencies if status == 200 else failures).append(dt if status == 200 else status)

    start = time.perf_counter()
    pool = [threading.Thread(target=worker) for _ in range(threads)]
    for t in pool:
        t.start()
    for t in pool:
        t.join()
    wall = time.perf_counter() - start
    latencies.sort()
    p95 = latencies[int(0.95 * (len(latencies) - 1))] if latencies else float("nan")
    return {"done": len(latencies), "failed": failures, "rps": len(latencies) / wall, "p95": p95}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--requests", type=int, default=1500, help="per endpoint")
    parser.add_argument("--threads", type=int, default=THREADS)
    parser.add_argument("--time-cap", type=float, default=30.0, help="seconds per endpoint")
    parser.add_argument("--sweeps", type=int, default=40)
    args = parser.parse_args()

    import requests

    work = Path(tempfile.mkdtemp(prefix="labdb-bench-api-"))
    (work / "static").mkdir()
    env = {
        "LABDB_VAR_DIR": str(work),
        "MEDIA_ROOT": str(work / "media"),
        "STATIC_ROOT": str(work / "static"),
        "SECRET_KEY": "bench-only-key-not-secret",
        "DEBUG": "0",
        "ALLOWED_HOSTS": "127.0.0.1",
        "LOG_LEVEL": "WARNING",
        "DJANGO_SETTINGS_MODULE": "labdb.settings",
    }
    os.environ.pop("DATABASE_URL", None)  # always the throw-away SQLite file under `work`
    os.environ.update(env)
    fit_id, key = prepare(args.sweeps)

    port = free_port()
    base = f"http://127.0.0.1:{port}/"
    server = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "gunicorn",
            "--chdir",
            str(ROOT / "bench"),
            "--workers",
            str(WORKERS),
            "--bind",
            f"127.0.0.1:{port}",
            "--log-level",
            "warning",
            "bench_api:application",
        ],
        env={**os.environ, "PYTHONPATH": str(ROOT)},
    )
    try:
        wait_until_up(f"{base}{PLAIN_PATH}{fit_id}/")
        auth = {"Authorization": f"Token {key}"}
        api_fit = requests.get(f"{base}api/v1/fits/{fit_id}/", headers=auth, timeout=10).json()
        plain = requests.get(f"{base}{PLAIN_PATH}{fit_id}/", timeout=10).json()
        if json.loads(json.dumps(api_fit)) != plain:
            raise SystemExit(f"the plain view does not return the same fit:\n{api_fit}\n{plain}")
        cases = [
            ("plain Django view, same fit", f"{base}{PLAIN_PATH}{fit_id}/", {}),
            ("API GET fits/{id}/", f"{base}api/v1/fits/{fit_id}/", auth),
            (
                "API GET sweeps/?part=…&page_size=20",
                f"{base}api/v1/sweeps/?part={PART}&page_size=20",
                auth,
            ),
        ]
        for _, url, headers in cases:  # warm both workers' caches and connections
            load(url, headers, 40, args.threads, 10)
        results = [
            (name, load(url, headers, args.requests, args.threads, args.time_cap))
            for name, url, headers in cases
        ]
    finally:
        server.terminate()
        server.wait(timeout=30)
        shutil.rmtree(work, ignore_errors=True)

    print(
        f"bench_api · {platform.node()} · {cpu_model()} · {os.cpu_count()} cores · Python "
        f"{platform.python_version()} · SQLite · gunicorn {WORKERS} sync workers · "
        f"{args.threads} client threads · {args.requests} requests per endpoint"
    )
    print(f"{'endpoint':40s} {'done':>6s} {'req/s':>8s} {'p95 ms':>8s}")
    for name, r in results:
        print(
            f"{name:40s} {r['done']:6d} {r['rps']:8.0f} {r['p95'] * 1e3:8.1f}"
            + (f"  ({len(r['failed'])} failed: {sorted(set(r['failed']))})" if r["failed"] else "")
        )
    ratio = results[1][1]["rps"] / results[0][1]["rps"]
    verdict = "meets" if ratio >= 0.5 else "MISSES"
    print(f"API fit / plain view throughput ratio: {ratio:.2f} ({verdict} the target of 0.5)")


if __name__ == "__main__":
    main()
