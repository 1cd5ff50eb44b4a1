"""Benchmark of junction fitting: vectorised batch vs a per-sweep curve_fit loop, and single fits.

Plain script (``python bench/bench_physics.py``); prints the machine and a table.
Targets: batch ≥ 20,000 sweeps/s and ≥ 50× a curve_fit loop; single fit median ≤ 2 ms.
"""

from __future__ import annotations

import os

# One core, as the targets are stated: no BLAS/OpenMP threads (set before numpy loads).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import platform  # noqa: E402
import statistics  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
import scipy  # noqa: E402
from scipy.optimize import curve_fit  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from support.machine import cpu_model  # noqa: E402

from labdb.physics.batch import fit_junction_batch  # noqa: E402
from labdb.physics.fitting import fit_junction  # noqa: E402
from labdb.physics.junction import junction_capacitance  # noqa: E402

N_SWEEPS = 10_000
N_POINTS = 41
N_CURVE_FIT = 1_000  # curve_fit is timed on this many sweeps and scaled to N_SWEEPS
N_SINGLE = 200
REPEATS = 3


def synthetic(n: int, seed: int = 2026):
    """n seeded sweeps 0–20 V: CJO 30–500 pF, VJ 0.4–2.5 V, M 0.3–2.5, 0.3 % noise."""
    rng = np.random.default_rng(seed)
    v = np.linspace(0.0, 20.0, N_POINTS)
    truth = np.column_stack(
        [rng.uniform(30e-12, 500e-12, n), rng.uniform(0.4, 2.5, n), rng.uniform(0.3, 2.5, n)]
    )
    c = np.array([junction_capacitance(v, *p) for p in truth])
    c *= 1.0 + 0.003 * rng.standard_normal(c.shape)
    return v, c, truth


def model_f(v, cjo, vj, m):
    return junction_capacitance(v, cjo, vj, m)


# Rates use the CPU time of this process (time.process_time): on a shared machine the wall
# clock also counts time spent waiting for other programs. Wall times are printed as well.
def timed(fn, repeats=REPEATS):
    """Result of fn() and the CPU seconds and wall seconds of each of ``repeats`` runs."""
    cpu, wall, out = [], [], None
    for _ in range(repeats):
        c0, w0 = time.process_time(), time.perf_counter()
        out = fn()
        cpu.append(time.process_time() - c0)
        wall.append(time.perf_counter() - w0)
    return out, cpu, wall


def main() -> None:
    print("labdb physics benchmark")
    print(f"  platform : {platform.platform()}")
    print(f"  cpu      : {cpu_model()} ({os.cpu_count()} logical CPUs)")
    print(
        f"  python   : {platform.python_version()}, numpy {np.__version__}, scipy {scipy.__version__}"
    )
    if hasattr(os, "getloadavg"):
        print(
            f"  load avg : {os.getloadavg()[0]:.2f} (other work on the machine slows every figure)"
        )
    v, c, truth = synthetic(N_SWEEPS)

    fits, cpu_batch, wall_batch = timed(lambda: fit_junction_batch(v, c, model="junction"))
    rate_batch = N_SWEEPS / min(cpu_batch)

    # Two per-sweep curve_fit loops, both with relative weighting (sigma = C), timed on the
    # first N_CURVE_FIT sweeps and scaled. (a) MINPACK LM started at the TRUE parameters:
    # curve_fit's most favourable case, not available in practice. (b) The bounded solver
    # with our bounds from a generic guess (C at 0 V, VJ 0.7 V, M 0.5), as a user would run
    # it without our linearised start (unbounded from that guess most sweeps fail).
    lo_b, hi_b = [0.0, 0.05, 0.05], [np.inf, 5.0, 4.0]
    loops = {
        "a": lambda i: curve_fit(
            model_f, v, c[i], p0=truth[i], sigma=c[i], xtol=1e-10, ftol=1e-10
        )[0],
        "b": lambda i: curve_fit(
            model_f, v, c[i], p0=(c[i][0], 0.7, 0.5), sigma=c[i], bounds=(lo_b, hi_b),
            xtol=1e-10, ftol=1e-10,
        )[0],
    }  # fmt: skip
    ours = np.array([[f.params[k] for k in ("cjo", "vj", "m")] for f in fits[:N_CURVE_FIT]])
    rate_cf, rel_cf = {}, {}
    for key, one in loops.items():
        popts, cpu_cf, _ = timed(lambda one=one: [one(i) for i in range(N_CURVE_FIT)], 1)
        rate_cf[key] = N_CURVE_FIT / cpu_cf[0]
        rel_cf[key] = float(np.abs(ours / np.array(popts) - 1.0).max())

    single, single_wall = {}, {}
    for model in ("junction", "auto"):
        cpu, wall = [], []
        for i in range(N_SINGLE):
            _, t_cpu, t_wall = timed(lambda i=i, model=model: fit_junction(v, c[i], model), 1)
            cpu += t_cpu
            wall += t_wall
        single[model] = statistics.median(cpu) * 1e3
        single_wall[model] = statistics.median(wall) * 1e3

    _, cpu_auto, _ = timed(lambda: fit_junction_batch(v, c, model="auto"), repeats=1)

    print()
    print(f"{N_SWEEPS:,} synthetic {N_POINTS}-point sweeps (seeded), model 'junction'.")
    print("Rates and times are CPU time of this process on one core; wall-clock in brackets.")
    print(f"curve_fit loops were timed on the first {N_CURVE_FIT:,} sweeps and scaled.")
    print(f"{'figure':<56}{'value':>18}  target")
    rows = [
        ("batch fit_junction_batch, best of 3 [sweeps/s]", f"{rate_batch:,.0f}", "≥ 20,000"),
        (
            "batch, 10,000 sweeps, median of 3 [s]",
            f"{statistics.median(cpu_batch):.3f} ({statistics.median(wall_batch):.3f})",
            "",
        ),
        ("(a) curve_fit LM from the true parameters [sweeps/s]", f"{rate_cf['a']:,.0f}", ""),
        ("    speed-up batch / (a) [×]", f"{rate_batch / rate_cf['a']:,.1f}", "≥ 50"),
        ("    max rel. parameter difference batch vs (a)", f"{rel_cf['a']:.1e}", "≤ 1e-6"),
        ("(b) curve_fit bounded, generic start [sweeps/s]", f"{rate_cf['b']:,.0f}", ""),
        ("    speed-up batch / (b) [×]", f"{rate_batch / rate_cf['b']:,.1f}", "≥ 50"),
        ("    max rel. parameter difference batch vs (b)", f"{rel_cf['b']:.1e}", "≤ 1e-6"),
        (
            f"single fit_junction 'junction', median of {N_SINGLE} [ms]",
            f"{single['junction']:.2f} ({single_wall['junction']:.2f})",
            "≤ 2",
        ),
        (
            "single fit_junction 'auto' (the default), median [ms]",
            f"{single['auto']:.2f} ({single_wall['auto']:.2f})",
            "",
        ),
        (
            "batch, model 'auto' (both models + AICc) [sweeps/s]",
            f"{N_SWEEPS / cpu_auto[0]:,.0f}",
            "",
        ),
    ]
    for name, value, target in rows:
        print(f"{name:<56}{value:>18}  {target}")
    print(f"converged: {sum(f.converged for f in fits):,} of {N_SWEEPS:,} batch fits")


if __name__ == "__main__":
    main()
