"""A bounded load test on loopback: page views, API reads and uploads against gunicorn.

Usage (from the repository root)::

    .venv/bin/python bench/load_test.py [--seconds 60] [--clients 6] [--database-url URL]

It builds a throw-away site in a temporary folder (SQLite there, or the empty PostgreSQL
database named by ``--database-url``): migrate, the demo lab (``seed_demo``), a viewer and
a member with tokens, collectstatic; starts gunicorn with 2 sync workers on 127.0.0.1 and
drives it from a few client threads for a fixed time. The mix: 50 % page views by a
logged-in viewer (dashboard, parts, a part, a lot, a sweep, a search, the tank finder),
35 % API reads with a read token (lists, a sweep, a fit, a SPICE card) and 15 % uploads of
a new C–V file with a write token. Prints requests/s and latency percentiles per kind and
the machine; exits 1 on any error (status >= 400 or no answer). Traffic goes to 127.0.0.1
only, and the run stops by itself.
"""

from __future__ import annotations

import argparse
import os
import platform
import random
import re
import secrets
import shutil
import socket
import subprocess
import sys
import tempfile
import threading
import time
from collections import defaultdict
from pathlib import Path

import numpy as np
import requests

ROOT = Path(__file__).resolve().parent.parent
PY = sys.executable
PASSWORD = "load-" + secrets.token_hex(6)
MIX = (("page", 0.50), ("api", 0.35), ("upload", 0.15))


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def manage(env: dict, *args: str) -> str:
    out = subprocess.run(
        [PY, "manage.py", *args], cwd=ROOT, env=env, capture_output=True, text=True, check=False
    )
    if out.returncode != 0:
        sys.exit(f"manage.py {' '.join(args)} failed:\n{out.stdout[-2000:]}\n{out.stderr[-3000:]}")
    return out.stdout


def build_site(tmp: Path, database_url: str | None) -> dict:
    """Environment of a fresh site with the demo lab, two users and their tokens."""
    env = {k: v for k, v in os.environ.items() if k not in ("DATABASE_URL", "CELERY_BROKER_URL")}
    env.update(
        DEBUG="0",
        SECRET_KEY=secrets.token_urlsafe(32),
        ALLOWED_HOSTS="127.0.0.1",
        LABDB_VAR_DIR=str(tmp / "var"),
        MEDIA_ROOT=str(tmp / "media"),
        STATIC_ROOT=str(tmp / "static"),
        LOG_LEVEL="WARNING",
        # One client address sends everything: the per-user write throttle would only
        # measure itself, so it is lifted here.
        API_WRITE_RATE="1000000/min",
    )
    if database_url:
        env["DATABASE_URL"] = database_url
    (tmp / "var").mkdir()
    manage(env, "migrate", "--noinput", "-v", "0")
    manage(env, "collectstatic", "--noinput", "-v", "0")
    t0 = time.perf_counter()
    manage(env, "seed_demo", "--no-users")
    print(f"demo lab seeded in {time.perf_counter() - t0:.0f} s", flush=True)
    manage(
        env,
        "shell",
        "-c",
        "from labdb.accounts.services import ensure_user; "
        f"ensure_user('load-viewer', 'viewer', {PASSWORD!r}); "
        f"ensure_user('load-member', 'member', {PASSWORD!r})",
    )
    env["_READ_KEY"] = manage(env, "mint_token", "load-viewer", "--scope", "read").strip()
    env["_WRITE_KEY"] = manage(env, "mint_token", "load-member", "--scope", "write").strip()
    return env


def start_gunicorn(env: dict, port: int) -> subprocess.Popen:
    genv = dict(env, GUNICORN_BIND=f"127.0.0.1:{port}", GUNICORN_WORKERS="2")
    proc = subprocess.Popen(
        [str(Path(PY).with_name("gunicorn")), "-c", "deploy/gunicorn.conf.py", "--access-logfile",
         "/dev/null"],
        cwd=ROOT, env=genv, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
        start_new_session=True,
    )  # fmt: skip
    deadline = time.perf_counter() + 90
    while time.perf_counter() < deadline:
        try:
            if requests.get(f"http://127.0.0.1:{port}/healthz", timeout=10).status_code == 200:
                return proc
        except requests.RequestException:
            pass  # still booting
        if proc.poll() is not None:
            sys.exit(f"gunicorn exited: {proc.stderr.read().decode()[-3000:]}")
        time.sleep(0.5)
    stop_gunicorn(proc)
    sys.exit("gunicorn did not answer /healthz within 90 s")


def stop_gunicorn(proc: subprocess.Popen) -> None:
    """Stop gunicorn and its workers (started in their own process group)."""
    if proc.poll() is None:
        os.killpg(proc.pid, 15)
        proc.wait(timeout=30)


def cv_file(i: int) -> bytes:
    """A C–V file of an invented unit: C = CJO·(1 + V/VJ)^(−M), 41 points, 0–20 V."""
    rng = np.random.default_rng(i)
    cjo, vj, m = 45e-12 * (1 + 0.05 * rng.standard_normal()), 0.75, 0.52
    v = np.linspace(0, 20, 41)
    c = cjo * (1 + v / vj) ** -m * (1 + 0.002 * rng.standard_normal(v.size))
    return (
        "bias (V),C (pF)\n"
        + "".join(f"{a:.3f},{b * 1e12:.5f}\n" for a, b in zip(v, c, strict=True))
    ).encode()


class Client:
    """One simulated user: a logged-in page session and two API tokens."""

    def __init__(self, base: str, env: dict, ids: dict, n: int):
        self.base, self.ids, self.n, self.uploads = base, ids, n, 0
        self.pages = requests.Session()
        login = self.pages.get(base + "/accounts/login/", timeout=30)
        token = re.search(r'name="csrfmiddlewaretoken" value="([^"]+)"', login.text).group(1)
        done = self.pages.post(
            base + "/accounts/login/",
            data={"username": "load-viewer", "password": PASSWORD, "csrfmiddlewaretoken": token},
            headers={"Referer": base + "/accounts/login/"}, timeout=30,
        )  # fmt: skip
        if "/accounts/login/" in done.url:
            sys.exit("the load client could not log in")
        self.read = requests.Session()
        self.read.headers["Authorization"] = "Token " + env["_READ_KEY"]
        self.write = requests.Session()
        self.write.headers["Authorization"] = "Token " + env["_WRITE_KEY"]

    def page(self, rng: random.Random) -> requests.Response:
        ids = self.ids
        path = rng.choice([
            "/", "/parts/", f"/parts/{rng.choice(ids['parts'])}/", f"/lots/{rng.choice(ids['lots'])}/",
            f"/sweeps/{rng.choice(ids['sweeps'])}/",
            "/search/?v1=1&v2=4&min_swing=1.2",
            "/tank/?l_uh=4.7&c_fixed=10&f_low=9&f_high=11&v_max=20",
        ])  # fmt: skip
        return self.pages.get(self.base + path, timeout=60)

    def api(self, rng: random.Random) -> requests.Response:
        ids = self.ids
        path = rng.choice([
            "/api/v1/parts/", "/api/v1/sweeps/?part=QSV-3052", f"/api/v1/sweeps/{rng.choice(ids['sweeps'])}/",
            f"/api/v1/fits/{rng.choice(ids['fits'])}/", f"/api/v1/fits/{rng.choice(ids['fits'])}/spice",
        ])  # fmt: skip
        return self.read.get(self.base + path, timeout=60)

    def upload(self, rng: random.Random) -> requests.Response:
        self.uploads += 1
        label = f"C{self.n:02d}-{self.uploads:04d}"
        return self.write.post(
            self.base + "/api/v1/sweeps/",
            files={"file": (f"{label}.csv", cv_file(self.n * 100000 + self.uploads))},
            data={"part": "QSV-3052", "lot": "LOAD-1", "unit": label, "fixture": "Wren meter jig",
                  "temperature_c": "25", "illumination": "dark"},
            timeout=120,
        )  # fmt: skip


def known_ids(base: str, env: dict) -> dict:
    api = requests.Session()
    api.headers["Authorization"] = "Token " + env["_READ_KEY"]
    sweeps = api.get(base + "/api/v1/sweeps/?kind=cv", timeout=60).json()["results"]
    lots = api.get(base + "/api/v1/lots/", timeout=60).json()["results"]
    return {
        "parts": ["QSV-3052", "HOL-5R31D", "HOL-5G72H"],
        "lots": [lot["id"] for lot in lots],
        "sweeps": [s["id"] for s in sweeps],
        "fits": [s["current_fit"]["id"] for s in sweeps if s.get("current_fit")],
    }


def drive(base: str, env: dict, seconds: float, clients: int) -> dict:
    ids = known_ids(base, env)
    users = [Client(base, env, ids, n) for n in range(clients)]
    stop_at = time.perf_counter() + seconds
    times: dict[str, list[float]] = defaultdict(list)
    errors: list[str] = []
    lock = threading.Lock()

    def run(user: Client, seed: int) -> None:
        rng = random.Random(seed)
        kinds, weights = zip(*MIX, strict=True)
        while time.perf_counter() < stop_at:
            kind = rng.choices(kinds, weights)[0]
            t0 = time.perf_counter()
            try:
                response = getattr(user, kind)(rng)
                failed = response.status_code >= 400
                what = f"{kind} {response.status_code} {response.url}"
            except requests.RequestException as exc:
                failed, what = True, f"{kind} no answer: {exc}"
            with lock:
                times[kind].append(time.perf_counter() - t0)
                if failed:
                    errors.append(what)

    threads = [threading.Thread(target=run, args=(u, i)) for i, u in enumerate(users)]
    t0 = time.perf_counter()
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    return {"elapsed": time.perf_counter() - t0, "times": times, "errors": errors}


def report(result: dict, database: str, clients: int) -> None:
    elapsed, times = result["elapsed"], result["times"]
    everything = [t for v in times.values() for t in v]
    print(
        f"\nmachine: {platform.platform()}, {os.cpu_count()} CPUs, Python "
        f"{platform.python_version()}; gunicorn 2 sync workers; {database}; {clients} clients"
    )
    print(f"{'kind':8} {'requests':>9} {'req/s':>8} {'p50 ms':>8} {'p95 ms':>8} {'max ms':>8}")
    for kind in [k for k, _ in MIX] + ["all"]:
        v = np.asarray(everything if kind == "all" else times.get(kind, []), dtype=float) * 1e3
        if v.size == 0:
            continue
        print(
            f"{kind:8} {v.size:9d} {v.size / elapsed:8.1f} {np.percentile(v, 50):8.0f} "
            f"{np.percentile(v, 95):8.0f} {v.max():8.0f}"
        )
    print(f"errors: {len(result['errors'])} in {len(everything)} requests over {elapsed:.0f} s")
    for line in result["errors"][:20]:
        print("  ", line)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--seconds", type=float, default=60.0)
    parser.add_argument("--clients", type=int, default=6)
    parser.add_argument("--database-url", help="an empty PostgreSQL database (default: SQLite)")
    args = parser.parse_args()
    tmp = Path(tempfile.mkdtemp(prefix="labdb-load-"))
    proc = None
    try:
        env = build_site(tmp, args.database_url)
        port = free_port()
        proc = start_gunicorn(env, port)
        result = drive(f"http://127.0.0.1:{port}", env, args.seconds, args.clients)
    finally:
        if proc is not None:
            stop_gunicorn(proc)
        shutil.rmtree(tmp, ignore_errors=True)
    database = "PostgreSQL" if args.database_url else "SQLite"
    report(result, database, args.clients)
    return 1 if result["errors"] else 0


if __name__ == "__main__":
    sys.exit(main())
