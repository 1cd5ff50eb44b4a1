"""Fit the junction capacitance model to one C–V sweep: parameters, errors and fit quality.

Method: bounded nonlinear least squares (``scipy.optimize.least_squares``, trust-region
reflective) with the analytic Jacobian of C(V_R) = CJO·(1 + V_R/VJ)^(−M) [+ CP] (SPICE's
linear extension beyond FC·VJ forward bias, FC = 0.5). Residuals are relative,
r_i = √w_i·(C_model,i − C_i)/C_i, because capacitance spans decades over a sweep. Starting
points come from straight-line fits of log C against log(1 + V_R/VJ) over a VJ grid and from
fixed M of 0.3, 0.5, 0.8, 1.5 and 2.5 (a multi-start); the best start is refined first and
the next two are tried only when the first fit fails or stops on a VJ or M bound.
"""

from __future__ import annotations

import math
from dataclasses import MISSING, asdict, dataclass, field, fields
from itertools import repeat
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from labdb.physics import _fitcore as core
from labdb.physics.errors import PhysicsInputError
from labdb.physics.junction import MODEL_PARAMS, MODELS, capacitance_of

#: Version of the fitting method, stored with every fit; bump when results would change.
FITTER_VERSION = "labdb-fit 1"
#: CP must exceed this many standard errors for ``auto`` to keep the junction+cp model.
CP_MIN_Z = 2.0

LOSSES = ("linear", "soft_l1")
MIN_SPAN_V = 0.5  # narrower sweeps cannot separate VJ from M at all
AICC_MARGIN = 2.0  # the larger model must lower AICc by more than this to be chosen
# Tight tolerances so the batch fitter (labdb.physics.batch) agrees to ~1e-9.
_TOL = {"xtol": 1e-10, "ftol": 1e-12, "gtol": 1e-10}


@dataclass(frozen=True)
class JunctionFit:
    """A fitted junction model of one sweep (all quantities SI).

    Attributes
    ----------
    model : str
        ``"junction"`` or ``"junction+cp"``.
    params, stderr : dict of str to float
        ``cjo`` [F], ``vj`` [V], ``m`` [1] and, for ``junction+cp``, ``cp`` [F]; standard errors
        in the same units.
    correlation : list of list of float, shape (p, p)
        Parameter correlation matrix, order ``MODEL_PARAMS[model]``.
    rms_rel : float
        RMS of the weighted relative residuals, √(Σ w r² / Σ w) [1].
    r2 : float
        Coefficient of determination on the capacitance itself (unweighted) [1].
    aicc : float
        n·ln(SSR/n) + 2k + 2k(k+1)/(n−k−1) with SSR of the weighted relative residuals and k
        the number of model parameters (the noise level is not counted); inf when n ≤ k + 1.
    n_points : int
        Points that took part (weight > 0).
    bias_min_v, bias_max_v : float
        Reverse-bias range of those points [V].
    converged : bool
        The optimiser met its convergence test.
    message : str
        The optimiser's stop reason, and the model choice under ``model="auto"``.
    warnings : list of str
        Reasons to distrust the result (see :func:`fit_junction`).
    loss : str
        ``"linear"`` or ``"soft_l1"``.
    fitter_version : str
        :data:`FITTER_VERSION` of the code that made the fit.
    """

    model: str
    params: dict[str, float]
    stderr: dict[str, float]
    correlation: list[list[float]]
    rms_rel: float
    r2: float
    aicc: float
    n_points: int
    bias_min_v: float
    bias_max_v: float
    converged: bool
    message: str
    warnings: list[str] = field(default_factory=list)
    loss: str = "linear"
    fitter_version: str = FITTER_VERSION

    def evaluate(self, bias_v: Any) -> np.ndarray:
        """Capacitance [F], shape of ``bias_v``, of the fitted model at reverse bias [V]."""
        return capacitance_of(self, bias_v)

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-safe dict; non-finite numbers become ``None``."""
        return _json_safe(asdict(self))

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> JunctionFit:
        """Rebuild a fit from :meth:`to_dict` output (``None`` numbers read back as NaN/inf)."""
        names = {f.name for f in fields(cls)}
        required = {f.name for f in fields(cls) if MISSING is f.default is f.default_factory}
        missing = required - set(data)
        if missing or set(data) - names:
            raise PhysicsInputError(
                f"not a stored junction fit: missing {sorted(missing)}, "
                f"unknown {sorted(set(data) - names)}"
            )
        d = dict(data)
        nan = math.nan
        d["params"] = {k: nan if v is None else float(v) for k, v in d["params"].items()}
        d["stderr"] = {k: nan if v is None else float(v) for k, v in d["stderr"].items()}
        d["correlation"] = [
            [nan if v is None else float(v) for v in row] for row in d["correlation"]
        ]
        for key in ("rms_rel", "r2", "bias_min_v", "bias_max_v"):
            d[key] = nan if d[key] is None else float(d[key])
        d["aicc"] = math.inf if d["aicc"] is None else float(d["aicc"])
        d["warnings"] = list(d.get("warnings", []))
        return cls(**d)


_FIELDS = tuple(f.name for f in fields(JunctionFit))


def _json_safe(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {k: _json_safe(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [_json_safe(v) for v in obj]
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def validate_sweep(
    bias_v: Any, capacitance_f: Any, weights: Any = None, n_params: int = 3, where: str = ""
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Check one sweep and return float arrays (bias [V], C [F], weights), shape (n,).

    Raises
    ------
    PhysicsInputError
        Naming the problem (``where`` prefixes the message, e.g. "sweep 3: ").
    """
    arrays = []
    for name, val in (("bias_v", bias_v), ("capacitance_f", capacitance_f), ("weights", weights)):
        if val is None:
            arrays.append(None)
            continue
        try:
            arr = np.asarray(val, dtype=float)
        except (TypeError, ValueError):
            raise PhysicsInputError(f"{where}{name} is not a sequence of numbers") from None
        if arr.ndim != 1:
            raise PhysicsInputError(f"{where}{name} must be one-dimensional, got shape {arr.shape}")
        arrays.append(arr)
    v, c, w = arrays
    if v.size != c.size:
        raise PhysicsInputError(
            f"{where}bias_v has {v.size} values but capacitance_f has {c.size}; they must pair up"
        )
    for name, arr in (("bias_v", v), ("capacitance_f", c)):
        bad = np.flatnonzero(~np.isfinite(arr))
        if bad.size:
            raise PhysicsInputError(
                f"{where}{name} holds {arr[bad[0]]} at index {bad[0]} ({bad.size} non-finite "
                "values); remove or repair those points"
            )
    bad = np.flatnonzero(c <= 0)
    if bad.size:
        raise PhysicsInputError(
            f"{where}capacitance_f must be positive; index {bad[0]} holds {c[bad[0]]:g} F "
            f"({bad.size} values ≤ 0)"
        )
    if w is None:
        w = np.ones_like(c)
    elif w.shape != c.shape:
        raise PhysicsInputError(
            f"{where}weights has shape {w.shape}; it must match capacitance_f, {c.shape}"
        )
    elif not (np.isfinite(w).all() and (w >= 0).all()):
        i = int(np.flatnonzero(~(np.isfinite(w) & (w >= 0)))[0])
        raise PhysicsInputError(f"{where}weights must be finite and ≥ 0; index {i} holds {w[i]}")
    used = w > 0
    n = int(used.sum())
    if n < n_params + 1:
        raise PhysicsInputError(
            f"{where}{n} points with weight > 0 cannot fit {n_params} parameters; "
            f"need at least {n_params + 1}"
        )
    lo, hi = float(v[used].min()), float(v[used].max())
    if hi - lo < MIN_SPAN_V:
        raise PhysicsInputError(
            f"{where}bias span {hi - lo:.3g} V ({lo:g} V to {hi:g} V) is narrower than "
            f"{MIN_SPAN_V} V; VJ and M cannot be told apart"
        )
    return v, c, w


def fit_junction(
    bias_v: Any,
    capacitance_f: Any,
    model: str = "auto",
    weights: Any = None,
    loss: str = "linear",
) -> JunctionFit:
    """Fit the junction capacitance model to a C–V sweep.

    Parameters
    ----------
    bias_v : array_like, shape (n,)
        Reverse bias V_R [V], positive for reverse bias.
    capacitance_f : array_like, shape (n,)
        Measured capacitance [F], > 0.
    model : {"auto", "junction", "junction+cp"}
        ``"auto"`` fits both and keeps ``junction+cp`` only when it converged and lowers AICc
        by more than 2 (otherwise the simpler model wins).
    weights : array_like, shape (n,), optional
        Relative weights w_i ≥ 0 of the squared relative residuals (0 drops a point).
    loss : {"linear", "soft_l1"}
        ``"soft_l1"`` is robust to outliers: after a linear fit, its scale is set to
        1.4826·median|r| and the statistics use the final reweighting 1/√(1 + (r/scale)²).

    Returns
    -------
    JunctionFit
        Standard errors are √diag(s²·(JᵀJ)⁻¹), s² = SSR/(n − p). Warnings when C does not
        fall with reverse bias (Spearman ρ above −0.5), when |corr(VJ, M)| > 0.99, when a
        parameter sits on a bound (VJ 0.05–5 V, M 0.05–4, CP ≥ 0) and when not converged.

    Raises
    ------
    PhysicsInputError
        Arrays of different length or not 1-D, NaN/inf, C ≤ 0, bad weights, fewer points
        than parameters + 1, bias span under 0.5 V, unknown model or loss.
    """
    if model not in ("auto",) + MODELS:
        raise PhysicsInputError(f"model {model!r} is unknown; use 'auto' or one of {MODELS}")
    if loss not in LOSSES:
        raise PhysicsInputError(f"loss {loss!r} is unknown; use one of {LOSSES}")
    need = len(MODEL_PARAMS["junction" if model == "auto" else model])
    v, c, w = validate_sweep(bias_v, capacitance_f, weights, need)
    used = w > 0
    scale = float(np.median(c[used]))
    cn = c / scale
    names = MODELS if model == "auto" else (model,)
    if model == "auto" and used.sum() < len(MODEL_PARAMS["junction+cp"]) + 1:
        names = ("junction",)
    fits = {}
    for name in names:
        x, ok, msg, w_eff = _fit_one(name, v, cn, w, loss)
        stats = core.fit_stats(name, x[None], v[None], cn[None], w_eff[None], np.array([scale]))
        fits[name] = (x[None], np.array([ok]), [msg], stats)
    rho = core.spearman(v[None], c[None], used[None])
    bias_range = (np.array([v[used].min()]), np.array([v[used].max()]))
    if len(fits) == 1:
        name = names[0]
        return build_fits(name, *fits[name], rho, bias_range, loss)[0]
    use_cp, notes = choose_auto(fits["junction"][3], fits["junction+cp"][3], fits["junction+cp"][1])
    name = "junction+cp" if use_cp[0] else "junction"
    return build_fits(name, *fits[name], rho, bias_range, loss, notes)[0]


def _fit_one(name, v, cn, w, loss):
    """Multi-start trust-region fit of one model; returns x, converged, message, weights."""
    lo, hi = core.bounds(name)
    sw = np.sqrt(w)
    a = sw / cn
    cache: dict[str, Any] = {}

    def evaluate(x):
        if cache.get("x") is None or not np.array_equal(cache["x"], x):
            r, J = core.model_jac(x[None], v[None], a[None], sw[None])
            cache.update(x=x.copy(), r=r[0], J=J[0].T)
        return cache

    def solve(x0, **kw):
        return least_squares(
            lambda x: evaluate(x)["r"],
            x0,
            jac=lambda x: evaluate(x)["J"],
            bounds=(lo, hi),
            method="trf",
            max_nfev=200,
            **_TOL,
            **kw,
        )

    def solve_first(x0):
        # MINPACK's unbounded LM is several times cheaper than the bounded trust region.
        # A minimum it finds strictly inside the bounds is a minimum of the bounded problem
        # too; anything else (a bound reached, no convergence) goes to the bounded solver.
        if loss == "linear" and np.all(x0 > lo) and np.all(x0 < hi):
            with np.errstate(all="ignore"):
                res = least_squares(
                    lambda x: evaluate(x)["r"],
                    x0,
                    jac=lambda x: evaluate(x)["J"],
                    method="lm",
                    max_nfev=200,
                    **_TOL,
                )
            if res.status > 0 and np.all(res.x > lo) and np.all(res.x < hi):
                return res
        return solve(x0)

    cand = core.start_candidates(name, v[None], cn[None], w[None])[0]
    best = solve_first(cand[0])
    if core.needs_more_starts(name, best.x[None], np.array([best.status > 0]))[0]:
        for x0 in cand[1:3]:
            res = solve(x0)
            if res.cost < best.cost:
                best = res
    if loss == "linear":
        return best.x, bool(best.status > 0), best.message, w
    used = w > 0
    r = evaluate(best.x)["r"]
    f_scale = max(1.4826 * float(np.median(np.abs(r[used]))), 1e-9)
    rob = solve(best.x, loss="soft_l1", f_scale=f_scale)
    r = evaluate(rob.x)["r"]
    w_eff = w / np.sqrt(1.0 + (r / f_scale) ** 2)
    msg = f"{rob.message} (soft_l1 loss, scale {f_scale:.3g} relative)"
    return rob.x, bool(rob.status > 0), msg, w_eff


def choose_auto(
    stats_j: dict[str, np.ndarray], stats_cp: dict[str, np.ndarray], converged_cp: np.ndarray
) -> tuple[np.ndarray, list[str]]:
    """Per sweep, whether ``junction+cp`` wins under ``model="auto"``, and a note on why."""
    a_j, a_cp = stats_j["aicc"], stats_cp["aicc"]
    p, se = stats_cp["params"], stats_cp["stderr"]
    # The extra parameter must be resolved, and VJ and M must not have run to a bound:
    # over a short sweep CJO, VJ, M and CP trade off, and AICc alone then picks a
    # degenerate four-parameter curve (VJ pinned at 5 V, CP half the capacitance).
    with np.errstate(invalid="ignore"):
        cp_resolved = np.nan_to_num(p[:, 3] / se[:, 3], nan=0.0) > CP_MIN_Z
    lo, hi = core.bounds("junction+cp")
    vjm = p[:, 1:3]
    pinned = (
        (vjm - lo[1:3] <= core.BOUND_TOL * lo[1:3]) | (hi[1:3] - vjm <= core.BOUND_TOL * hi[1:3])
    ).any(axis=1)
    better = a_cp < a_j - AICC_MARGIN
    use_cp = converged_cp & better & cp_resolved & ~pinned
    notes = []
    for i in range(len(a_j)):
        why = ""
        if better[i] and converged_cp[i] and not use_cp[i]:
            why = "; junction+cp rejected: " + (
                "VJ or M on a bound" if pinned[i] else f"CP not resolved (< {CP_MIN_Z:g} σ)"
            )
        notes.append(
            f"model chosen by AICc: junction {a_j[i]:.2f}, junction+cp {a_cp[i]:.2f} "
            f"(junction+cp needs to be lower by more than {AICC_MARGIN:g}"
            + ("" if converged_cp[i] else " and to converge")
            + ")"
            + why
        )
    return use_cp, notes


def build_fits(
    name: str,
    x: np.ndarray,
    converged: np.ndarray,
    messages: list[str],
    stats: dict[str, np.ndarray],
    rho: np.ndarray,
    bias_range: tuple[np.ndarray, np.ndarray],
    loss: str,
    notes: list[str] | None = None,
    idx: np.ndarray | None = None,
) -> list[JunctionFit]:
    """JunctionFit objects for the sweeps ``idx`` (all when None) from shared statistics."""
    idx = np.arange(x.shape[0]) if idx is None else np.asarray(idx)
    keys = MODEL_PARAMS[name]
    sub = {k: stats[k][idx] for k in ("params", "stderr", "corr", "rms_rel", "r2", "aicc", "n")}
    conv = np.asarray(converged)[idx]
    msgs = [messages[i] for i in idx.tolist()]
    warn = core.sweep_warnings(name, x[idx], sub["corr"], rho[idx], conv, msgs)
    lists = {k: v.tolist() for k, v in sub.items()}
    ids = idx.tolist()
    texts = msgs if notes is None else [f"{m}; {notes[i]}" for m, i in zip(msgs, ids, strict=True)]
    rows = zip(
        repeat(name),
        _dicts(keys, lists["params"]),
        _dicts(keys, lists["stderr"]),
        lists["corr"],
        lists["rms_rel"],
        lists["r2"],
        lists["aicc"],
        lists["n"],
        bias_range[0][idx].tolist(),
        bias_range[1][idx].tolist(),
        conv.tolist(),
        texts,
        warn,
        repeat(loss),
        repeat(FITTER_VERSION),
    )
    # The frozen __init__ costs ~10 µs per object, a lot for 10⁵ sweeps; these fields are
    # complete and typed (order of _FIELDS), so the instance dict is filled directly.
    out = []
    new, append = object.__new__, out.append
    for row in rows:
        fit = new(JunctionFit)
        fit.__dict__.update(zip(_FIELDS, row, strict=False))  # rows have len(_FIELDS) items
        append(fit)
    return out


def _dicts(keys, rows):
    """One dict per row of values (rows of 3 or 4 floats), built as literals for speed."""
    if len(keys) == 3:
        a, b, c = keys
        return [{a: x, b: y, c: z} for x, y, z in rows]
    a, b, c, d = keys
    return [{a: x, b: y, c: z, d: u} for x, y, z, u in rows]
