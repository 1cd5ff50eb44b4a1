"""Fit the junction model to many C–V sweeps at once, vectorised across sweeps.

Same model, relative weighting, bounds, starting points and statistics as
:func:`labdb.physics.fitting.fit_junction`; the optimiser is the vectorised
Levenberg–Marquardt of :mod:`labdb.physics.lm` instead of scipy's trust-region solver, so
thousands of sweeps iterate together. Both converge tightly (relative steps ~1e-10), so
the parameters agree to far better than 1e-6 (relative).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from labdb.physics import _fitcore as core
from labdb.physics.errors import PhysicsInputError
from labdb.physics.fitting import (
    MIN_SPAN_V,
    JunctionFit,
    build_fits,
    choose_auto,
    validate_sweep,
)
from labdb.physics.junction import MODEL_PARAMS, MODELS
from labdb.physics.lm import STATUS_TEXT, lm_solve

CHUNK = 1024  # sweeps fitted together: big enough to amortise numpy calls, small for the cache
# Tight enough that the batch and single fitters agree to ~1e-9 on well-posed sweeps; the
# starts are close, so hardly any damping is needed at first (tau).
LM_TOL = {"xtol": 1e-10, "ftol": 1e-13, "gtol": 1e-12, "max_iter": 200, "tau": 1e-8}


def fit_junction_batch(
    bias_v: Any, capacitance_f: Any, model: str = "junction"
) -> list[JunctionFit]:
    """Fit every sweep of a batch; the result i equals ``fit_junction(bias_v[i], C[i], model)``.

    Parameters
    ----------
    bias_v : array_like, shape (b, n) or (n,), or list of b arrays of shape (n_i,)
        Reverse bias V_R [V] of each sweep (a single 1-D array is shared by all sweeps).
    capacitance_f : array_like, shape (b, n), or list of b arrays of shape (n_i,)
        Measured capacitance [F], > 0. Sweeps of different length are padded and masked.
    model : {"junction", "junction+cp", "auto"}
        As in :func:`~labdb.physics.fitting.fit_junction`.

    Returns
    -------
    list of JunctionFit, length b

    Raises
    ------
    PhysicsInputError
        The first bad sweep, named by its index, with the same reasons as ``fit_junction``.
    """
    if model not in ("auto",) + MODELS:
        raise PhysicsInputError(f"model {model!r} is unknown; use 'auto' or one of {MODELS}")
    v, c, mask = _padded(bias_v, capacitance_f)
    need = len(MODEL_PARAMS["junction" if model == "auto" else model])
    _validate(v, c, mask, need)
    if v.shape[0] == 0:
        return []
    w = mask.astype(float)
    if mask.all():
        scale = np.median(c, axis=1)
    else:
        scale = np.nanmedian(np.where(mask, c, np.nan), axis=1)
    cn = np.where(mask, c / scale[:, None], 1.0)
    v = np.where(mask, v, 0.0)
    chunks = [slice(i, i + CHUNK) for i in range(0, v.shape[0], CHUNK)]
    rho = np.concatenate([core.spearman(v[s], c[s], mask[s]) for s in chunks])
    bias_range = (np.where(mask, v, np.inf).min(1), np.where(mask, v, -np.inf).max(1))
    names = MODELS if model == "auto" else (model,)
    fits = {name: _fit_chunked(name, v, cn, w, scale) for name in names}
    if model != "auto":
        return build_fits(model, *fits[model], rho, bias_range, "linear")
    # Too few points for junction+cp: fit_junction does not try it, so it must not win here.
    fits["junction+cp"][1][mask.sum(1) < len(MODEL_PARAMS["junction+cp"]) + 1] = False
    use_cp, notes = choose_auto(fits["junction"][3], fits["junction+cp"][3], fits["junction+cp"][1])
    out: list[JunctionFit | None] = [None] * v.shape[0]
    for name, idx in (
        ("junction", np.flatnonzero(~use_cp)),
        ("junction+cp", np.flatnonzero(use_cp)),
    ):
        built = build_fits(name, *fits[name], rho, bias_range, "linear", notes, idx)
        for i, fit in zip(idx.tolist(), built, strict=True):
            out[i] = fit
    return out  # type: ignore[return-value]


def _fit_chunked(name, v, cn, w, scale):
    """Fit in chunks small enough for the CPU cache; x, converged, messages and statistics."""
    parts = []
    for lo in range(0, v.shape[0], CHUNK):
        sl = slice(lo, lo + CHUNK)
        x, conv, msgs = _fit_model(name, v[sl], cn[sl], w[sl])
        parts.append((x, conv, msgs, core.fit_stats(name, x, v[sl], cn[sl], w[sl], scale[sl])))
    stats = {k: np.concatenate([p[3][k] for p in parts]) for k in parts[0][3]}
    msgs = [m for p in parts for m in p[2]]
    return np.concatenate([p[0] for p in parts]), np.concatenate([p[1] for p in parts]), msgs, stats


def _fit_model(name, v, cn, w):
    """Vectorised multi-start LM fit of one model: x (b, p), converged (b,), messages."""
    cand = core.start_candidates(name, v, cn, w)
    lo, hi = core.bounds(name)
    sw = np.sqrt(w)
    a = sw / cn
    b = v.shape[0]

    def residuals(rows):
        def fun(x, idx):
            sel = rows[idx]
            if sel.size == b:  # all sweeps still iterating: skip the copies
                return core.model_jac(x, v, a, sw)
            return core.model_jac(x, v[sel], a[sel], sw[sel])

        return fun

    rows = np.arange(b)
    res = lm_solve(residuals(rows), cand[:, 0], lo, hi, **LM_TOL)
    x, ssr, status = res.x, res.ssr, res.status
    redo = np.flatnonzero(core.needs_more_starts(name, x, res.converged))
    if redo.size:
        for k in (1, 2):
            rk = lm_solve(residuals(redo), cand[redo, k], lo, hi, **LM_TOL)
            better = rk.ssr < ssr[redo]
            sel = redo[better]
            x[sel], ssr[sel], status[sel] = rk.x[better], rk.ssr[better], rk.status[better]
    msgs = [STATUS_TEXT[s] for s in status.tolist()]
    return x, status > 0, msgs


def _padded(bias_v, capacitance_f):
    """Padded float arrays (b, n) of bias [V] and C [F] and the mask of real points."""
    if isinstance(capacitance_f, np.ndarray) and capacitance_f.dtype != object:
        c = capacitance_f.astype(float, copy=False)
        if c.ndim != 2:
            raise PhysicsInputError(
                f"capacitance_f must be 2-D (sweeps, points) or a list of 1-D sweeps, "
                f"got shape {c.shape}"
            )
        v = _numbers(bias_v, "bias_v")
        if v.ndim == 1 and v.shape[0] == c.shape[1]:
            v = np.broadcast_to(v, c.shape)
        if v.shape != c.shape:
            raise PhysicsInputError(f"bias_v has shape {v.shape} but capacitance_f has {c.shape}")
        return v, c, np.ones(c.shape, dtype=bool)
    if not isinstance(capacitance_f, list | tuple | np.ndarray):
        raise PhysicsInputError("capacitance_f must be a 2-D array or a list of 1-D sweeps")
    cs = [_one_d(ci, f"capacitance_f[{i}]") for i, ci in enumerate(capacitance_f)]
    if all(np.ndim(bi) == 0 for bi in bias_v):  # one bias array shared by every sweep
        bs = [_one_d(bias_v, "bias_v")] * len(cs)
    elif len(bias_v) != len(cs):
        raise PhysicsInputError(f"bias_v has {len(bias_v)} sweeps but capacitance_f has {len(cs)}")
    else:
        bs = [_one_d(bi, f"bias_v[{i}]") for i, bi in enumerate(bias_v)]
    n = max((ci.size for ci in cs), default=0)
    v = np.zeros((len(cs), n))
    c = np.ones((len(cs), n))
    mask = np.zeros((len(cs), n), dtype=bool)
    for i, (bi, ci) in enumerate(zip(bs, cs, strict=True)):
        if bi.size != ci.size:
            raise PhysicsInputError(
                f"sweep {i}: bias_v has {bi.size} values but capacitance_f has {ci.size}; "
                "they must pair up"
            )
        v[i, : bi.size], c[i, : ci.size], mask[i, : ci.size] = bi, ci, True
    return v, c, mask


def _numbers(arr, name):
    try:
        return np.asarray(arr, dtype=float)
    except (TypeError, ValueError):
        raise PhysicsInputError(f"{name} is not an array of numbers") from None


def _one_d(arr, name):
    out = _numbers(arr, name)
    if out.ndim != 1:
        raise PhysicsInputError(f"{name} must be one-dimensional, got shape {out.shape}")
    return out


def _validate(v, c, mask, need):
    """Vectorised checks; the first failing sweep is re-checked for its exact message."""
    with np.errstate(invalid="ignore"):
        bad = ~(np.isfinite(v) & np.isfinite(c) & (c > 0)) & mask
        n = mask.sum(1)
        span = np.where(mask, v, -np.inf).max(1) - np.where(mask, v, np.inf).min(1)
    fail = bad.any(1) | (n < need + 1) | ~(span >= MIN_SPAN_V)
    if fail.any():
        i = int(np.flatnonzero(fail)[0])
        validate_sweep(v[i][mask[i]], c[i][mask[i]], None, need, where=f"sweep {i}: ")
        raise PhysicsInputError(f"sweep {i} cannot be fitted")  # not reached: message above
