"""Shared numerics of the single and batch junction fitters: model, starts, fit statistics.

Everything here works on a leading batch axis (b sweeps, padded to n points, a weight of 0
marking padding), so ``fit_junction`` (b = 1) and ``fit_junction_batch`` run the very same
code for starting guesses and for standard errors, R², AICc and warnings. Capacitances are
normalised by a per-sweep scale (the median capacitance) so every fitted number is O(1).
"""

from __future__ import annotations

import numpy as np

from labdb.physics.junction import DEFAULT_FC

#: Bounds in normalised units (cjo and cp divided by the sweep's median C). cjo > 0 is kept
#: off zero by a tiny floor; VJ 0.05–5 V and M 0.05–4 cover silicon, LEDs and hyperabrupt parts.
LOWER = {"cjo": 1e-9, "vj": 0.05, "m": 0.05, "cp": 0.0}
UPPER = {"cjo": np.inf, "vj": 5.0, "m": 4.0, "cp": np.inf}

#: VJ grid of the linearised start [V]: log C = log CJO − M·log(1 + V_R/VJ) is a straight line
#: in log(1 + V_R/VJ) for each VJ, solved in closed form, then refined by a parabola in log VJ.
VJ_GRID = np.geomspace(LOWER["vj"], UPPER["vj"], 10)
#: Fixed-M starts of the multi-start (abrupt, graded, hyperabrupt).
M_STARTS = (0.3, 0.5, 0.8, 1.5, 2.5)
#: CP starts as fractions of the smallest measured capacitance.
CP_FRACTIONS = (0.0, 0.2, 0.4, 0.6, 0.8)

#: |corr(VJ, M)| above which the two are reported as too correlated to separate. Sweeps from
#: 0 V to ≥ 10 V reverse on silicon-like junctions give 0.85–0.97; a 0–1 V sweep gives > 0.99.
CORR_LIMIT = 0.99
#: Spearman rank correlation of C against bias above which C "does not fall" (a junction
#: gives nearly −1). A rank statistic ignores single noisy points.
SPEARMAN_LIMIT = -0.5
#: Relative distance to a bound that counts as sitting on it.
BOUND_TOL = 1e-4


def bounds(model: str) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper bounds (p,) of a model's normalised parameters."""
    names = ("cjo", "vj", "m", "cp")[: 4 if model == "junction+cp" else 3]
    return np.array([LOWER[k] for k in names]), np.array([UPPER[k] for k in names])


def model_jac(x, bias, a, sw, fc=DEFAULT_FC, jac=True):
    """Weighted relative residuals and their Jacobian for a batch.

    x (b, p) normalised parameters; bias (b, n) [V]; a = sqrt(w)/C_norm (b, n); sw = sqrt(w).
    Returns r (b, n) = sqrt(w)·(C_model/C − 1) and Jt (b, p, n), Jt[:, j] = ∂r/∂x_j (None
    when ``jac`` is false). Parameters run along axis 1 so each derivative is contiguous.
    """
    cjo, vj, m = x[:, 0:1], x[:, 1:2], x[:, 2:3]
    # Forward bias beyond FC·VJ uses SPICE's linear extension; one cheap test skips it.
    if bias.min() < -fc * vj.min() and ((bias + fc * vj) < 0).any():
        return _model_jac_forward(x, bias, a, sw, fc, jac)
    base = 1.0 + bias / vj
    lb = np.log(base)
    pw = np.exp(-m * lb)
    pa = pw * a
    cpa = cjo * pa
    r = cpa - sw
    if x.shape[1] == 4:
        r += x[:, 3:4] * a
    if not jac:
        return r, None
    Jt = np.empty((x.shape[0], x.shape[1], bias.shape[1]))
    Jt[:, 0] = pa
    np.multiply(cpa, (m / vj) * (1.0 - 1.0 / base), out=Jt[:, 1])  # u/(1+u) = 1 − 1/base
    np.multiply(cpa, -lb, out=Jt[:, 2])
    if x.shape[1] == 4:
        Jt[:, 3] = a
    return r, Jt


def _model_jac_forward(x, bias, a, sw, fc, jac):
    """``model_jac`` when some points lie beyond FC·VJ forward bias (piecewise SPICE form)."""
    cjo, vj, m = x[:, 0:1], x[:, 1:2], x[:, 2:3]
    u = bias / vj
    base = 1.0 + u
    fwd = base < 1.0 - fc
    lb = np.log(np.where(fwd, 1.0, base))
    inv_f1 = (1.0 - fc) ** (-1.0 - m)
    lin = 1.0 - fc * (1.0 + m) - m * u
    pw = np.where(fwd, inv_f1 * lin, np.exp(-m * lb))
    c = cjo * pw
    if x.shape[1] == 4:
        c = c + x[:, 3:4]
    r = c * a - sw
    if not jac:
        return r, None
    Jt = np.empty((x.shape[0], x.shape[1], bias.shape[1]))
    Jt[:, 0] = pw * a
    d_vj = np.where(fwd, inv_f1 * m * u / vj, pw * m * u / (vj * np.where(fwd, 1.0, base)))
    Jt[:, 1] = cjo * d_vj * a
    d_m = np.where(fwd, inv_f1 * (-np.log(1.0 - fc) * lin - fc - u), -pw * lb)
    Jt[:, 2] = cjo * d_m * a
    if x.shape[1] == 4:
        Jt[:, 3] = a
    return r, Jt


def _log_base(bias, vj, fc):
    """log(1 + V_R/VJ), held at log(1 − FC) beyond FC·VJ forward bias (start only)."""
    base = 1.0 + bias / vj
    if bias.min() < -fc * np.min(vj):
        base = np.maximum(base, 1.0 - fc)
    return np.log(base)


def _ssr_at(m, vxx, cxy, vyy):
    """Weighted SSR in log C of the line with slope −m (least-squares intercept)."""
    return vyy + 2.0 * m * cxy + m * m * vxx


def _fixed_cp_starts(bias, y, w, fc):
    """Starts (b, K, 3) and log-space costs (b, K) for one CP level; candidate 0 is refined.

    For each VJ the line y = α − M·x, x = log(1 + V_R/VJ), is fitted by weighted least
    squares from raw moments (matrix products over the points).
    """
    lo, hi = LOWER["m"], UPPER["m"]
    wy = w * y
    sw, sy = w.sum(-1), wy.sum(-1)
    ym = sy / sw
    vyy = (wy * y).sum(-1) - sy * ym
    xg = _log_base(bias[:, None, :], VJ_GRID[:, None], fc)  # (b, G, n)
    sx = (xg @ w[:, :, None])[..., 0]
    sxx = ((xg * xg) @ w[:, :, None])[..., 0]
    sxy = (xg @ wy[:, :, None])[..., 0]
    xm = sx / sw[:, None]
    vxx = sxx - sx * xm
    cxy = sxy - sx * ym[:, None]
    vyy_g = vyy[:, None]
    m_free = np.clip(-cxy / np.where(vxx > 0, vxx, np.inf), lo, hi)
    ssr = _ssr_at(m_free, vxx, cxy, vyy_g)
    g = np.clip(np.argmin(ssr, axis=1), 1, len(VJ_GRID) - 2)
    rows = np.arange(len(g))
    s0, s1, s2 = ssr[rows, g - 1], ssr[rows, g], ssr[rows, g + 1]
    # Vertex of the parabola through three equally spaced log-VJ points.
    curv = s0 - 2.0 * s1 + s2
    step = np.where(curv > 0, 0.5 * (s0 - s2) / np.where(curv > 0, curv, 1.0), 0.0)
    lvj = np.log(VJ_GRID[g]) + np.clip(step, -1.0, 1.0) * np.log(VJ_GRID[1] / VJ_GRID[0])
    vj = np.clip(np.exp(lvj), LOWER["vj"], UPPER["vj"])
    xr = _log_base(bias, vj[:, None], fc)
    rsx, rsxx, rsxy = (w * xr).sum(-1), (w * xr * xr).sum(-1), (wy * xr).sum(-1)
    rxm = rsx / sw
    rvxx, rcxy = rsxx - rsx * rxm, rsxy - rsx * ym
    rm = np.clip(-rcxy / np.where(rvxx > 0, rvxx, np.inf), lo, hi)
    ms = np.array(M_STARTS)
    sk = _ssr_at(ms[None, :, None], vxx[:, None], cxy[:, None], vyy_g[:, None])  # (b, K, G)
    gk = np.argmin(sk, axis=2)
    xm_k = np.take_along_axis(xm, gk, 1)
    fixed = np.stack(
        [np.exp(ym[:, None] + ms * xm_k), VJ_GRID[gk], np.broadcast_to(ms, gk.shape)], -1
    )
    refined = np.stack([np.exp(ym + rm * rxm), vj, rm], -1)[:, None]
    costs = np.concatenate(
        [_ssr_at(rm, rvxx, rcxy, vyy)[:, None], np.take_along_axis(sk, gk[..., None], 2)[..., 0]], 1
    )
    return np.concatenate([refined, fixed], 1), costs


def start_candidates(model, bias, cn, w, fc=DEFAULT_FC):
    """Starting points (b, K, p) of a model, best first, from linearised fits.

    Parameters
    ----------
    model : {"junction", "junction+cp"}
    bias : ndarray, shape (b, n)
        Reverse bias [V].
    cn : ndarray, shape (b, n)
        Capacitance normalised by the sweep scale [dimensionless]; padding holds 1.
    w : ndarray, shape (b, n)
        Weights (0 for padding).

    Returns
    -------
    ndarray, shape (b, K, p)
        Candidates ordered by their log-space cost (≈ relative SSR), best first.
    """
    if model == "junction":
        cand, cost = _fixed_cp_starts(bias, np.log(cn), w, fc)
    else:
        # Every CP level is one more row of the same linearised problem, solved in one go.
        b, n = cn.shape
        nf = len(CP_FRACTIONS)
        cp = np.array(CP_FRACTIONS) * np.where(w > 0, cn, np.inf).min(axis=1)[:, None]
        cj = cn[:, None, :] - cp[:, :, None]  # (b, F, n), positive since CP < min C
        # Weight (C − CP)²/C² makes log(C − CP) residuals comparable to relative ones.
        wf = w[:, None, :] * (cj / cn[:, None, :]) ** 2
        c, k = _fixed_cp_starts(
            np.repeat(bias, nf, axis=0), np.log(cj).reshape(b * nf, n), wf.reshape(b * nf, n), fc
        )
        kk = c.shape[1]
        cp_col = np.broadcast_to(cp[:, :, None, None], (b, nf, kk, 1))
        cand = np.concatenate([c.reshape(b, nf, kk, 3), cp_col], -1).reshape(b, nf * kk, 4)
        cost = k.reshape(b, nf * kk)
    order = np.argsort(cost, axis=1, kind="stable")
    lo, hi = bounds(model)
    return np.clip(np.take_along_axis(cand, order[..., None], 1), lo, hi)


def spearman(bias, c, mask):
    """Spearman rank correlation, shape (b,), of C against bias over the masked points.

    bias [V], c [F] and mask have shape (b, n); ties get average ranks. NaN when C or the
    bias is constant.
    """
    b, n = bias.shape
    # Sweeps usually step the bias upward: then its ranks are the positions (padding, if
    # any, sits after the points), and only C needs sorting.
    prefix = (mask[:, 1:] <= mask[:, :-1]).all()  # no point after a padding slot
    if prefix and ((np.diff(bias, axis=1) > 0) | ~mask[:, 1:]).all():
        rb = np.broadcast_to(np.arange(1.0, n + 1.0), bias.shape)
        rc = _avg_ranks(c, mask)
    else:
        ranks = _avg_ranks(np.concatenate([bias, c]), np.concatenate([mask, mask]))
        rb, rc = ranks[:b], ranks[b:]
    wm = mask.astype(float)
    n = wm.sum(1, keepdims=True)
    db = (rb - (wm * rb).sum(1, keepdims=True) / n) * wm
    dc = (rc - (wm * rc).sum(1, keepdims=True) / n) * wm
    den = np.sqrt((db * db).sum(1) * (dc * dc).sum(1))
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(den > 0, (db * dc).sum(1) / np.where(den > 0, den, 1.0), np.nan)


def _avg_ranks(v, mask):
    """Ranks along axis 1 with ties averaged; masked entries rank last (and are ignored)."""
    v = np.where(mask, v, np.inf)
    order = np.argsort(v, axis=1, kind="stable")
    s = np.take_along_axis(v, order, 1)
    n = v.shape[1]
    pos = np.broadcast_to(np.arange(n), v.shape)
    same_prev = np.zeros(v.shape, bool)
    same_prev[:, 1:] = s[:, 1:] == s[:, :-1]
    first = np.maximum.accumulate(np.where(same_prev, 0, pos), axis=1)
    same_next = np.zeros(v.shape, bool)
    same_next[:, :-1] = same_prev[:, 1:]
    last = np.minimum.accumulate(np.where(same_next, n - 1, pos)[:, ::-1], axis=1)[:, ::-1]
    ranks = np.empty(v.shape)
    np.put_along_axis(ranks, order, 0.5 * (first + last) + 1.0, 1)
    return ranks


def fit_stats(model, x, bias, cn, w, scale, fc=DEFAULT_FC):
    """Parameters, standard errors, correlations and figures of merit of fitted sweeps.

    Parameters
    ----------
    model : {"junction", "junction+cp"}
    x : ndarray, shape (b, p)
        Fitted normalised parameters.
    bias, cn, w : ndarray, shape (b, n)
        Reverse bias [V], normalised capacitance, effective weights (0 = not a point).
    scale : ndarray, shape (b,)
        Capacitance scale [F] that ``cn`` and normalised CJO/CP are divided by.

    Returns
    -------
    dict of ndarray
        ``params`` and ``stderr`` (b, p) in SI, ``corr`` (b, p, p), ``ssr``, ``rms_rel``,
        ``r2``, ``aicc``, ``n`` (b,). Covariance = s²·(JᵀJ)⁻¹ with s² = SSR/(n − p).
    """
    sw = np.sqrt(w)
    r, Jt = model_jac(x, bias, sw / cn, sw, fc)
    mask = w > 0
    n = mask.sum(1)
    k = x.shape[1]
    ssr = (r * r).sum(1)
    with np.errstate(divide="ignore", invalid="ignore"):
        s2 = ssr / (n - k)
        A = Jt @ Jt.transpose(0, 2, 1)
        try:
            inv = np.linalg.inv(A)
        except np.linalg.LinAlgError:  # a singular sweep: pseudo-inverse, one at a time
            inv = np.stack([np.linalg.pinv(ai) for ai in A])
        d = np.sqrt(np.abs(np.diagonal(inv, axis1=1, axis2=2)))
        sd = d * np.sqrt(s2)[:, None]
        # From (JᵀJ)⁻¹ alone, so the correlation stays defined when a fit is exact (s² = 0).
        corr = inv / (d[:, :, None] * d[:, None, :])
        # R² is on the capacitance itself, unweighted, over the points that count.
        cm = (r / np.where(mask, sw, 1.0) + 1.0) * cn
        cbar = (cn * mask).sum(1) / n
        sst = (((cn - cbar[:, None]) * mask) ** 2).sum(1)
        r2 = 1.0 - (((cm - cn) * mask) ** 2).sum(1) / sst
        nk1 = n - k - 1
        aicc = np.where(
            nk1 > 0,
            n * np.log(np.maximum(ssr, 1e-300) / n)
            + 2 * k
            + 2 * k * (k + 1) / np.where(nk1 > 0, nk1, 1),
            np.inf,
        )
        rms_rel = np.sqrt(ssr / w.sum(1))
    is_cap = np.array([1.0, 0.0, 0.0, 1.0][:k])  # cjo and cp are capacitances, scaled back
    factor = scale[:, None] * is_cap + (1.0 - is_cap)
    return {
        "params": x * factor,
        "stderr": sd * factor,
        "corr": corr,
        "ssr": ssr,
        "rms_rel": rms_rel,
        "r2": r2,
        "aicc": aicc,
        "n": n,
    }


def at_bounds(model, x):
    """Boolean (b, p): parameter within BOUND_TOL (relative, or of 1 for a zero bound)."""
    lo, hi = bounds(model)
    near_lo = x - lo <= BOUND_TOL * np.maximum(np.abs(lo), 1e-2)
    near_hi = np.isfinite(hi) & (hi - x <= BOUND_TOL * np.abs(hi))
    return near_lo | near_hi


def sweep_warnings(model, x, corr, rho, converged, messages):
    """Warning texts (one list per sweep) from fitted values and the rank check."""
    names = ("cjo", "vj", "m", "cp")[: x.shape[1]]
    lo, hi = bounds(model)
    bound = at_bounds(model, x)
    c_vm = corr[:, 1, 2]
    flag_rho = ~(rho <= SPEARMAN_LIMIT)  # NaN (constant C) also warns
    flag_corr = ~(np.abs(c_vm) <= CORR_LIMIT)
    flag_any = flag_rho | flag_corr | bound.any(1) | ~converged
    out: list[list[str]] = [[] for _ in range(x.shape[0])]
    for i in np.flatnonzero(flag_any):
        warn = out[i]
        if flag_rho[i]:
            warn.append(
                f"capacitance does not fall with reverse bias (Spearman rank correlation of C "
                f"with bias {rho[i]:+.2f}; a junction gives nearly −1, warned above "
                f"{SPEARMAN_LIMIT}); the junction model may not describe this sweep"
            )
        if flag_corr[i]:
            warn.append(
                f"VJ and M are too correlated to separate (correlation {c_vm[i]:+.4f}, limit "
                f"±{CORR_LIMIT}); a wider bias span, nearer 0 V and higher reverse bias, helps"
            )
        for j in np.flatnonzero(bound[i]):
            side, val = ("lower", lo[j]) if x[i, j] - lo[j] < hi[j] - x[i, j] else ("upper", hi[j])
            text = {"vj": f"{val:g} V", "m": f"{val:g}", "cp": f"{val:g} F"}.get(
                names[j], f"({val:g} × the median C)"
            )
            warn.append(f"{names[j]} sits at its {side} bound {text}")
        if not converged[i]:
            warn.append(f"the fit did not converge: {messages[i]}")
    return out


def needs_more_starts(model, x, converged):
    """Boolean (b,): the first fit failed or stopped on a VJ or M bound, so try more starts."""
    return ~converged | at_bounds(model, x)[:, 1:3].any(1)
