"""Benchmark of impedance sweeps: one-port file parse + fit, and a bias series to a fitted C–V.

Plain script (``python bench/bench_impedance.py``); prints the machine and a table.
Targets: a 201-point .s1p parsed and fitted (series R–L–C) in ≤ 20 ms median; a bias series
of 25 such files to a fitted C–V in ≤ 1 s. The second figure is measured twice: the pure
pipeline (parse, 25 fits, C–V at the default frequency, junction fit) and the stored path
(``record_impedance_file`` for each file, then ``derive_cv_from_bias_series``) on a
throw-away SQLite database and media folder.
"""

from __future__ import annotations

import os
import platform
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import scipy

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from support.machine import cpu_model  # noqa: E402

from labdb.ingest.impedance import parse_impedance_file  # noqa: E402
from labdb.physics.bias_series import ImpedanceSweep, bias_series_to_cv  # noqa: E402
from labdb.physics.fitting import fit_junction  # noqa: E402
from labdb.physics.impedance import fit_series_rlc  # noqa: E402
from labdb.physics.junction import junction_capacitance  # noqa: E402

N_POINTS = 201
N_BIASES = 25
REPEATS_FILE = 200
REPEATS_SERIES = 7
REPEATS_STORED = 3


def s1p(bias_v: float, rng: np.random.Generator, unit: str = "U1", lot: str = "B1") -> bytes:
    """A 201-point one-port file (MHz, S, MA, R 50) of an invented varactor at ``bias_v``."""
    f = np.geomspace(1e5, 1e9, N_POINTS)
    w = 2 * np.pi * f
    cs = float(junction_capacitance(bias_v, 51e-12, 0.72, 0.54, 0.6e-12))
    z = 0.5 + 1j * (w * 1.5e-9 - 1 / (w * cs))
    z *= 1 + 1e-3 * (rng.standard_normal(N_POINTS) + 1j * rng.standard_normal(N_POINTS))
    s = (z - 50) / (z + 50)
    head = (
        f"! part: BENCH-V\n! lot: {lot}\n! unit: {unit}\n! fixture: bench analyser\n"
        f"! bias: {bias_v:g} V\n# MHz S MA R 50\n"
    )
    rows = "".join(
        f"{fi / 1e6:.6f} {abs(si):.12f} {np.degrees(np.angle(si)):.9f}\n"
        for fi, si in zip(f, s, strict=True)
    )
    return (head + rows).encode()


def timed(fn, repeats: int) -> list[float]:
    out = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return out


def parse_and_fit(data: bytes):
    parsed = parse_impedance_file(data, "bench.s1p")
    return parsed, fit_series_rlc(parsed.frequency_hz, parsed.z_ohm)


def series_to_cv(files: list[bytes]):
    sweeps = []
    for data in files:
        parsed, fit = parse_and_fit(data)
        sweeps.append(ImpedanceSweep(parsed.bias_v, parsed.frequency_hz, parsed.z_ohm, fit))
    cv = bias_series_to_cv(sweeps)
    return cv, fit_junction(cv.bias_v, cv.capacitance_f)


def stored_path(biases: np.ndarray) -> list[tuple[float, float]] | str:
    """(record seconds, derive seconds) per run on a throw-away database, or why not."""
    tmp = Path(tempfile.mkdtemp(prefix="labdb-bench-impedance-"))
    os.environ.update(
        DJANGO_SETTINGS_MODULE="labdb.settings",
        SECRET_KEY="bench-only-not-secret",
        DATABASE_URL=f"sqlite:///{tmp / 'bench.sqlite3'}",
        MEDIA_ROOT=str(tmp / "media"),
        LOG_LEVEL="WARNING",
    )
    try:
        import django

        django.setup()
        from django.core.management import call_command

        call_command("migrate", verbosity=0)
        # Warm-up: the lot recomputation a derivation triggers imports statsmodels once per
        # process (~2 s); that is start-up cost, not the cost of a derivation.
        import labdb.quality.services  # noqa: F401
        from labdb.catalog.models import Part, Unit
        from labdb.measurements.models import Fixture
        from labdb.measurements.services.bias_series import derive_cv_from_bias_series
        from labdb.measurements.services.impedance import record_impedance_file
    except Exception as exc:  # the stored figure is optional where Django cannot start
        return f"{type(exc).__name__}: {exc}"
    Part.objects.create(part_number="BENCH-V", kind="varactor", rated_reverse_v=30.0)
    Fixture.objects.create(name="bench analyser", kind="meter")
    runs = []
    for r in range(REPEATS_STORED):
        rng = np.random.default_rng(100 + r)
        files = [s1p(v, rng, unit="U1", lot=f"B{r}") for v in biases]
        t0 = time.perf_counter()
        for i, data in enumerate(files):
            (out,) = record_impedance_file(data, f"b{i}.s1p", origin="command")
            assert out.status == "stored", out.problems
        t1 = time.perf_counter()
        (derived,) = derive_cv_from_bias_series(
            Unit.objects.get(lot__code=f"B{r}", label="U1"), origin="command"
        )
        t2 = time.perf_counter()
        assert derived.status == "stored", derived.problems
        runs.append((t1 - t0, t2 - t1))
    return runs


def main() -> None:
    print("labdb impedance benchmark")
    print(f"  platform : {platform.platform()}")
    print(f"  cpu      : {cpu_model()} ({os.cpu_count()} logical CPUs)")
    print(
        f"  python   : {platform.python_version()}, numpy {np.__version__}, scipy {scipy.__version__}"
    )
    if hasattr(os, "getloadavg"):
        print(
            f"  load avg : {os.getloadavg()[0]:.2f} (other work on the machine slows every figure)"
        )
    rng = np.random.default_rng(2026)
    one = s1p(2.0, rng)
    biases = np.linspace(0.0, 24.0, N_BIASES)
    files = [s1p(v, rng) for v in biases]
    parse_and_fit(one)  # warm-up: imports and first-call caches
    t_file = timed(lambda: parse_and_fit(one), REPEATS_FILE)
    t_parse = timed(lambda: parse_impedance_file(one, "bench.s1p"), REPEATS_FILE)
    t_series = timed(lambda: series_to_cv(files), REPEATS_SERIES)
    cv, jfit = series_to_cv(files)
    print()
    print(f"{'figure':<52}{'median':>10}{'target':>10}")
    ms = statistics.median(t_file) * 1e3
    print(f"{'201-point .s1p: parse + series R-L-C fit':<52}{ms:>8.2f} ms{'20 ms':>10}")
    print(f"{'   of which parse':<52}{statistics.median(t_parse) * 1e3:>8.2f} ms")
    s = statistics.median(t_series)
    print(f"{'25 files -> C-V -> junction fit (pure)':<52}{s * 1e3:>8.1f} ms{'1 s':>10}")
    stored = stored_path(biases)
    if isinstance(stored, str):
        print(f"  stored path skipped: {stored}")
    else:
        rec = statistics.median(r for r, _ in stored)
        der = statistics.median(d for _, d in stored)
        label = "25 files recorded + C-V derived and fitted (SQLite)"
        print(f"{label:<52}{(rec + der) * 1e3:>8.1f} ms{'1 s':>10}")
        print(f"{'   of which 25 x record_impedance_file':<52}{rec * 1e3:>8.1f} ms")
        print(f"{'   of which derive_cv_from_bias_series':<52}{der * 1e3:>8.1f} ms")
    print()
    print(
        f"C-V at {cv.frequency_hz / 1e6:g} MHz over {cv.bias_v.size} biases; junction fit "
        f"CJO {jfit.params['cjo'] * 1e12:.3f} pF, VJ {jfit.params['vj']:.3f} V, "
        f"M {jfit.params['m']:.3f} (model {jfit.model})"
    )


if __name__ == "__main__":
    main()
