"""Levenberg–Marquardt least squares run on many independent problems at once.

Every problem (a row of ``x``) keeps its own damping and stops on its own; all rows still
iterate together in numpy so thousands of small fits cost little more than a few. Damping
follows Nielsen's gain-ratio rule with Marquardt's diagonal scaling (running maximum of the
diagonal of JᵀJ, as MINPACK does); simple bounds are handled by clipping the step and fixing
parameters whose gradient pushes them past a bound. References: K. Madsen, H. B. Nielsen,
O. Tingleff, *Methods for Non-Linear Least Squares Problems* (IMM, DTU, 2004), §3.2;
J. J. Moré, *The Levenberg–Marquardt algorithm: implementation and theory* (1978).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

#: Meaning of each status code of :class:`LMResult`.
STATUS_TEXT = {
    4: "residuals are exactly zero",
    3: "gradient orthogonal to the residuals within gtol",
    2: "relative reduction of the sum of squares below ftol",
    1: "relative step below xtol",
    0: "iteration limit reached",
    -1: "no descent step found (damping grew without bound)",
    -2: "residuals are not finite at the starting point",
}


@dataclass(frozen=True)
class LMResult:
    """Outcome of :func:`lm_solve` for b problems.

    Attributes
    ----------
    x : ndarray, shape (b, p)
        Solutions (same units as the start).
    ssr : ndarray, shape (b,)
        Sum of squared residuals at ``x``.
    status : ndarray of int, shape (b,)
        Stop reason, a key of :data:`STATUS_TEXT`; > 0 means converged.
    n_iter : ndarray of int, shape (b,)
        Residual-and-Jacobian evaluations after the one at the start.
    """

    x: np.ndarray
    ssr: np.ndarray
    status: np.ndarray
    n_iter: np.ndarray

    @property
    def converged(self) -> np.ndarray:
        """Boolean (b,): the problem met a convergence test."""
        return self.status > 0

    def message(self, i: int) -> str:
        """Stop reason of problem ``i`` in words."""
        return STATUS_TEXT[int(self.status[i])]


Residuals = Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]


def lm_solve(
    fun: Residuals,
    x0: np.ndarray,
    lower: np.ndarray | float = -np.inf,
    upper: np.ndarray | float = np.inf,
    *,
    xtol: float = 1e-10,
    ftol: float = 1e-14,
    gtol: float = 1e-12,
    max_iter: int = 200,
    tau: float = 1e-3,
) -> LMResult:
    """Minimise ½‖r(x)‖² for each row of ``x0`` by Levenberg–Marquardt.

    Parameters
    ----------
    fun : callable ``fun(x, idx) -> (r, J)``
        Residuals r, shape (k, n), and transposed Jacobian Jt, shape (k, p, n), with
        Jt[:, j, i] = ∂r_i/∂x_j, of the problems ``idx`` (int array, shape (k,)) at parameters
        ``x`` (k, p). Padding residuals and their derivatives must be 0.
    x0 : array_like, shape (b, p)
        Starting points.
    lower, upper : array_like, shape (p,) or (b, p), optional
        Bounds; starts are clipped into them.
    xtol : float
        Stop when the next step is below ``xtol·(‖x‖ + xtol)``.
    ftol : float
        Stop when the next step is predicted to lower the sum of squares by less than
        ``ftol`` of it.
    gtol : float
        Stop when max_j |(Jᵀr)_j| / (‖J_j‖·‖r‖) over free parameters is below ``gtol``.
    max_iter : int
        Iteration limit per problem.
    tau : float
        Initial damping relative to the scaled diagonal.

    Returns
    -------
    LMResult
    """
    x = np.array(x0, dtype=float, ndmin=2)
    b, p = x.shape
    lo = np.broadcast_to(np.asarray(lower, dtype=float), (b, p))
    hi = np.broadcast_to(np.asarray(upper, dtype=float), (b, p))
    x = np.clip(x, lo, hi)
    r, Jt = fun(x, np.arange(b))
    ssr = np.einsum("bn,bn->b", r, r)
    A, g = _normal(r, Jt)
    D = np.diagonal(A, axis1=1, axis2=2).copy()
    mu = np.full(b, float(tau))
    nu = np.full(b, 2.0)
    status = np.where(np.isfinite(ssr), 0, -2)
    status[ssr == 0] = 4
    done = status != 0
    n_iter = np.zeros(b, dtype=int)
    eye = np.eye(p)
    for _ in range(max_iter):
        act = np.flatnonzero(~done)
        if act.size == 0:
            break
        xa, Aa, ga, ssr_a = x[act], A[act], g[act], ssr[act]
        lo_a, hi_a = lo[act], hi[act]
        Da = np.where(D[act] > 0, D[act], 1.0)
        fixed = ((xa <= lo_a) & (ga > 0)) | ((xa >= hi_a) & (ga < 0))
        free = ~fixed
        M = Aa + (mu[act, None] * Da)[:, :, None] * eye
        if fixed.any():
            delta = _reduced_step(M, ga, free, np.zeros_like(ga))
        else:
            delta = np.linalg.solve(M, -ga[:, :, None])[:, :, 0]
        hit = free & ((xa + delta < lo_a) | (xa + delta > hi_a))
        if hit.any():
            # Parameters the step pushes through a bound stop on it; the others are solved
            # again with those moved there (a projected Newton step, not a mere clip).
            to_bound = np.where(hit, np.clip(xa + delta, lo_a, hi_a) - xa, 0.0)
            delta = _reduced_step(M, ga, free & ~hit, to_bound)
        xt = np.clip(xa + delta, lo_a, hi_a)
        dc = xt - xa
        clipped = (xt != xa + delta).any(1)
        pred = -(np.einsum("bi,bi->b", ga, dc) + 0.5 * np.einsum("bi,bij,bj->b", dc, Aa, dc))

        # Tests that need no new residuals: the gradient is orthogonal to the residuals
        # (MINPACK's scale-free gtol, free parameters only); the quadratic model promises less
        # than ftol of the sum of squares; or the step is below xtol. In the last two the
        # step is so small that the quadratic model is exact to rounding, so it is taken
        # without evaluating the residuals again (one evaluation saved per problem).
        gcos = np.abs(ga) / np.sqrt(Da * ssr_a[:, None])
        g_ok = np.where(fixed, 0.0, gcos).max(1) <= gtol
        small_f = (pred <= 0.5 * ftol * ssr_a) & ~clipped
        small_step = np.sqrt((dc * dc).sum(1)) <= xtol * (np.sqrt((xt * xt).sum(1)) + xtol)
        stop = np.select([g_ok, small_f, small_step], [3, 2, 1], 0)
        if stop.any():
            final = (stop == 1) | (stop == 2)
            final &= pred >= 0
            x[act[final]] = xt[final]
            ssr[act[final]] -= 2.0 * pred[final]
            status[act[stop != 0]] = stop[stop != 0]
            done[act[stop != 0]] = True
            go = stop == 0
            act, xt, ssr_a, pred = act[go], xt[go], ssr_a[go], pred[go]
            if act.size == 0:
                continue
        n_iter[act] += 1
        rt, Jt = fun(xt, act)
        ssr_t = np.einsum("bn,bn->b", rt, rt)
        actual = 0.5 * (ssr_a - ssr_t)
        accept = np.isfinite(ssr_t) & (actual > 0)

        ok = act[accept]
        rho = actual[accept] / np.where(pred[accept] > 0, pred[accept], np.inf)
        x[ok], ssr[ok] = xt[accept], ssr_t[accept]
        all_ok = bool(accept.all())  # the usual case near convergence: skip the copies
        At, gt = _normal(rt, Jt) if all_ok else _normal(rt[accept], Jt[accept])
        A[ok], g[ok] = At, gt
        D[ok] = np.maximum(D[ok], np.diagonal(At, axis1=1, axis2=2))
        mu[ok] *= np.maximum(1.0 / 3.0, 1.0 - (2.0 * rho - 1.0) ** 3)
        nu[ok] = 2.0
        bad = act[~accept]
        mu[bad] *= nu[bad]
        nu[bad] *= 2.0

        new_status = np.select([accept & (ssr_t == 0), mu[act] > 1e30], [4, -1], 0)
        status[act] = new_status
        done[act] = new_status != 0
    return LMResult(x=x, ssr=ssr, status=status, n_iter=n_iter)


def _normal(r, Jt):
    """JᵀJ (k, p, p) and Jᵀr (k, p) from residuals (k, n) and Jt (k, p, n)."""
    return Jt @ Jt.transpose(0, 2, 1), (Jt @ r[:, :, None])[:, :, 0]


def _reduced_step(M, g, free, fixed_step):
    """Solve M·δ = −g over the free parameters, the others taking ``fixed_step``."""
    eye = np.eye(M.shape[1])
    rhs = -(g + (M @ fixed_step[:, :, None])[:, :, 0])
    Mf = np.where(free[:, :, None] & free[:, None, :], M, 0.0) + (~free)[:, :, None] * eye
    d = np.linalg.solve(Mf, np.where(free, rhs, 0.0)[:, :, None])[:, :, 0]
    return np.where(free, d, fixed_step)
