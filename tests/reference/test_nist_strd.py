"""The vectorised Levenberg–Marquardt core reproduces NIST StRD certified nonlinear fits.

Source: NIST/ITL Statistical Reference Datasets, nonlinear regression (files copied into
tests/reference/nist_strd/, certified values parsed from them). Both NIST starting points
of a dataset are solved together as one batch of two problems. Jacobians come from the
complex-step derivative (Squire & Trapp, SIAM Review 40, 1998), exact to rounding, so the
check is of the optimiser, not of hand-derived derivatives.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

from labdb.physics.lm import lm_solve

DATA = Path(__file__).parent / "nist_strd"


def _models():
    e = np.exp
    return {
        "Misra1a": lambda b, x: b[0] * (1 - e(-b[1] * x)),
        "Misra1b": lambda b, x: b[0] * (1 - (1 + b[1] * x / 2) ** (-2)),
        "Misra1c": lambda b, x: b[0] * (1 - (1 + 2 * b[1] * x) ** (-0.5)),
        "Misra1d": lambda b, x: b[0] * b[1] * x * ((1 + b[1] * x) ** (-1)),
        "MGH09": lambda b, x: b[0] * (x**2 + x * b[1]) / (x**2 + x * b[2] + b[3]),
        "Rat43": lambda b, x: b[0] / ((1 + e(b[1] - b[2] * x)) ** (1 / b[3])),
        "BoxBOD": lambda b, x: b[0] * (1 - e(-b[1] * x)),
        "Thurber": lambda b, x: (
            (b[0] + b[1] * x + b[2] * x**2 + b[3] * x**3)
            / (1 + b[4] * x + b[5] * x**2 + b[6] * x**3)
        ),
        "Eckerle4": lambda b, x: (b[0] / b[1]) * e(-0.5 * ((x - b[2]) / b[1]) ** 2),
    }


MODELS = _models()


def read_strd(name: str) -> dict[str, np.ndarray | float]:
    """Starts (2, p), certified parameters and standard deviations (p,), RSS and data."""
    lines = (DATA / f"{name}.dat").read_text().splitlines()
    rows = []
    for ln in lines:
        m = re.match(r"\s*b\d+\s*=\s*(\S+)\s+(\S+)\s+(\S+)\s+(\S+)\s*$", ln)
        if m:
            rows.append([float(g) for g in m.groups()])
    rows = np.array(rows)
    rss = next(float(ln.split(":")[1]) for ln in lines if ln.startswith("Residual Sum of Squares"))
    start = max(i for i, ln in enumerate(lines) if ln.startswith("Data:")) + 1
    xy = np.array([[float(t) for t in ln.split()] for ln in lines[start:] if ln.strip()])
    return {
        "starts": rows[:, :2].T.copy(),
        "certified": rows[:, 2],
        "sd": rows[:, 3],
        "rss": rss,
        "y": xy[:, 0],
        "x": xy[:, 1],
    }


def residuals_of(name: str, x: np.ndarray, y: np.ndarray):
    """``fun(b, idx) -> (r, Jt)`` for lm_solve, Jt by complex step (step 1e-30·max(|b|, 1))."""
    f = MODELS[name]

    def fun(b, idx):
        k, p = b.shape
        # LM may try wild steps (BoxBOD: exp overflows); they are rejected on their cost.
        with np.errstate(over="ignore", invalid="ignore"):
            return _residuals(b, k, p)

    def _residuals(b, k, p):
        r = np.array([f(bi, x) - y for bi in b])
        jt = np.empty((k, p, x.size))
        for i, bi in enumerate(b):
            for j in range(p):
                h = 1e-30 * max(abs(bi[j]), 1.0)
                bc = bi.astype(complex)
                bc[j] += 1j * h
                jt[i, j] = f(bc, x).imag / h
        return r, jt

    return fun


def solve(name: str):
    d = read_strd(name)
    fun = residuals_of(name, d["x"], d["y"])
    res = lm_solve(fun, d["starts"], xtol=1e-13, ftol=1e-16, gtol=1e-13, max_iter=2000)
    return d, res, fun


# BoxBOD from start 1 (b = 1, 1): the first Gauss–Newton steps drive b2 so high that
# 1 − exp(−b2·x) ≈ 1 at every x; there the b2 column of J vanishes and plain LM stops on a
# zero gradient (b1 = mean y). MINPACK's lmder (scipy least_squares, method="lm") stops
# there as well; only a trust region with bounds-style scaling or a heavily damped first
# step gets through. Strict, so an improvement shows up.
_BOXBOD_1 = pytest.mark.xfail(
    strict=True, reason="plain LM saturates b2 from BoxBOD start 1, as MINPACK lmder does"
)
CASES = [
    pytest.param(name, s, marks=_BOXBOD_1 if (name, s) == ("BoxBOD", 0) else ())
    for name in (
        "Misra1a",
        "Misra1b",
        "Misra1c",
        "Misra1d",
        "MGH09",
        "Rat43",
        "BoxBOD",
        "Thurber",
        "Eckerle4",
    )
    for s in (0, 1)
]


@pytest.mark.parametrize(("name", "start"), CASES)
def test_lm_reproduces_the_certified_parameters_and_rss(name, start):
    d, res, fun = solve(name)
    assert res.converged[start], res.message(start)
    # Certified values are given to 11 significant digits (NIST StRD).
    np.testing.assert_allclose(res.x[start], d["certified"], rtol=1e-6)
    np.testing.assert_allclose(res.ssr[start], d["rss"], rtol=1e-8)


@pytest.mark.parametrize("name", list(MODELS))
def test_the_covariance_formula_gives_the_certified_standard_deviations(name):
    # NIST's standard deviations are sqrt(diag(s²·(JᵀJ)⁻¹)), s² = RSS/(n − p) — the formula
    # labdb.physics uses for junction fits. Evaluated at the certified parameters.
    d = read_strd(name)
    fun = residuals_of(name, d["x"], d["y"])
    _, jt = fun(d["certified"][None], np.arange(1))
    n, p = d["x"].size, d["certified"].size
    cov = d["rss"] / (n - p) * np.linalg.inv(jt[0] @ jt[0].T)
    np.testing.assert_allclose(np.sqrt(np.diag(cov)), d["sd"], rtol=2e-6)
