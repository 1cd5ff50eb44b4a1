"""Junction capacitance of a PN junction: the SPICE diode depletion-capacitance model.

C(V_R) = CJO · (1 + V_R/VJ)^(−M) + CP for reverse bias V_R ≥ −FC·VJ, and SPICE's linear
extension beyond that point into forward bias. Reverse bias is positive (bench practice); the
SPICE diode voltage is Vd = −V_R. Source: SPICE2 diode model (Nagel, 1975), as implemented in
ngspice's diode model (checked against ngspice in tests/reference/).
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np

from labdb.physics.errors import PhysicsInputError

#: Names of the junction models the fitter knows, in order of complexity.
MODELS: tuple[str, ...] = ("junction", "junction+cp")

#: Parameters of each model, in the order the fitter uses them.
MODEL_PARAMS: dict[str, tuple[str, ...]] = {
    "junction": ("cjo", "vj", "m"),
    "junction+cp": ("cjo", "vj", "m", "cp"),
}

DEFAULT_FC = 0.5


def junction_capacitance(
    bias_v: Any,
    cjo: float,
    vj: float,
    m: float,
    cp: float = 0.0,
    fc: float = DEFAULT_FC,
) -> np.ndarray:
    """Small-signal capacitance of a junction at reverse bias.

    Parameters
    ----------
    bias_v : array_like, shape (n,) or scalar
        Reverse bias V_R [V], positive for reverse bias.
    cjo : float
        Zero-bias junction capacitance CJO [F], > 0.
    vj : float
        Junction (built-in) potential VJ [V], > 0.
    m : float
        Grading coefficient M [dimensionless], > 0 (0.5 abrupt, 0.33 graded, > 0.5 hyperabrupt).
    cp : float, optional
        Package capacitance CP in parallel [F], ≥ 0.
    fc : float, optional
        SPICE forward-bias depletion coefficient FC [dimensionless], 0 ≤ FC < 1.

    Returns
    -------
    ndarray, shape like ``bias_v``
        Capacitance [F].
    """
    if not (cjo > 0 and vj > 0 and m > 0 and cp >= 0 and 0 <= fc < 1):
        raise PhysicsInputError(
            f"junction parameters out of range: cjo={cjo!r} F, vj={vj!r} V, m={m!r}, "
            f"cp={cp!r} F, fc={fc!r} (need cjo, vj, m > 0, cp ≥ 0, 0 ≤ fc < 1)"
        )
    vr = np.asarray(bias_v, dtype=float)
    vd = -vr  # SPICE diode voltage
    knee = fc * vj
    depleted = vd < knee
    # Evaluate the power law only where it is defined; the rest uses the linear extension.
    base = np.where(depleted, 1.0 - vd / vj, 1.0)
    c_dep = cjo * base ** (-m)
    f1 = (1.0 - fc) ** (1.0 + m)
    c_fwd = cjo / f1 * (1.0 - fc * (1.0 + m) + m * vd / vj)
    return np.where(depleted, c_dep, c_fwd) + cp


def junction_capacitance_many(
    bias_v: np.ndarray,
    cjo: np.ndarray,
    vj: np.ndarray,
    m: np.ndarray,
    cp: np.ndarray,
    fc: float = DEFAULT_FC,
) -> np.ndarray:
    """Capacitance of many junction models at once, the formula of ``physics.junction``.

    C = CJO·(1 + V_R/VJ)^(−M) + CP for V_R ≥ −FC·VJ and SPICE's linear extension beyond
    (as :func:`junction_capacitance`, which takes one parameter set at a time and is the
    reference in tests/quality/test_batch_curves_match_the_physics_module.py).

    Parameters
    ----------
    bias_v : ndarray, shape (n,) or (b, n)
        Reverse bias [V], positive for reverse bias; a 1-D grid is shared by every model.
    cjo, vj, m, cp : ndarray, shape (b,)
        Parameters of ``b`` models: CJO [F] > 0, VJ [V] > 0, M [1] > 0, CP [F] ≥ 0.
    fc : float, optional
        Forward-bias depletion coefficient FC [1].

    Returns
    -------
    ndarray, shape (b, n)
        Capacitance [F].
    """
    vr = np.asarray(bias_v, dtype=float)
    vr = np.broadcast_to(vr, (len(cjo), vr.shape[-1])) if vr.ndim == 1 else vr
    cjo, vj, m, cp = (np.asarray(a, dtype=float)[:, None] for a in (cjo, vj, m, cp))
    vd = -vr
    depleted = vd < fc * vj
    base = np.where(depleted, 1.0 - vd / vj, 1.0)
    c_dep = cjo * base ** (-m)
    c_fwd = cjo / (1.0 - fc) ** (1.0 + m) * (1.0 - fc * (1.0 + m) + m * vd / vj)
    return np.where(depleted, c_dep, c_fwd) + cp


def params_of(model: Any) -> dict[str, float]:
    """Junction parameters of a fit, a mapping, or any object with a ``params`` mapping.

    Returns a dict with ``cjo`` [F], ``vj`` [V], ``m`` and ``cp`` [F] (0 when absent).
    """
    params = model.params if hasattr(model, "params") else model
    if not isinstance(params, Mapping):
        raise PhysicsInputError(
            f"expected a fit or a mapping of junction parameters, got {type(model).__name__}"
        )
    try:
        out = {k: float(params[k]) for k in ("cjo", "vj", "m")}
    except KeyError as exc:
        raise PhysicsInputError(f"junction parameters lack {exc.args[0]!r}") from None
    out["cp"] = float(params.get("cp", 0.0) or 0.0)
    return out


def capacitance_of(model: Any, bias_v: Any, fc: float = DEFAULT_FC) -> np.ndarray:
    """Capacitance [F] of a fit or parameter mapping at reverse bias ``bias_v`` [V]."""
    p = params_of(model)
    return junction_capacitance(bias_v, p["cjo"], p["vj"], p["m"], p["cp"], fc=fc)
