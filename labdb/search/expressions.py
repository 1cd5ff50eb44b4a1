"""The junction model and the tank as database expressions (SQLite and PostgreSQL alike).

C(V) = CJO·(1 + V/VJ)^(−M) + CP for reverse bias V > −FC·VJ, and SPICE's linear extension
C = CJO/(1−FC)^(1+M)·(1 − FC(1+M) − M·V/VJ) + CP beyond it — the same formula as
:func:`labdb.physics.junction_capacitance` (FC = 0.5), so the database shortlists exactly
what the physics core would. ``Power`` is PostgreSQL's POWER and, on SQLite, either the
built-in math function (3.35+ compiled with it) or the one Django registers on every
connection; both give IEEE double results.
"""

from __future__ import annotations

from django.db.models import Case, F, FloatField, Value, When
from django.db.models.expressions import Combinable
from django.db.models.functions import Power
from django.db.models.lookups import GreaterThan

from labdb.physics.junction import DEFAULT_FC

FLOAT = FloatField()


def const(x: float) -> Value:
    """A float literal with its type stated, so both databases do float arithmetic."""
    return Value(float(x), output_field=FLOAT)


def junction_c(bias, cjo: str, vj: str, m: str, cp: str) -> Combinable:
    """Capacitance [F] at ``bias`` (an expression, [V] reverse positive) from parameter columns.

    Parameters
    ----------
    bias : expression
        Reverse bias [V] per row (a constant or a column).
    cjo, vj, m, cp : str
        Column paths of CJO [F], VJ [V], M [dimensionless] and CP [F].
    """
    cjo_, vj_, m_, cp_ = F(cjo), F(vj), F(m), F(cp)
    depleted = cjo_ * Power(const(1.0) + bias / vj_, -m_)
    if isinstance(bias, Value) and bias.value >= 0:
        # Reverse bias is always above the knee −FC·VJ < 0: the power law alone applies.
        return depleted + cp_
    fc = const(DEFAULT_FC)
    knee = Power(const(1.0 - DEFAULT_FC), const(1.0) + m_)
    forward = cjo_ / knee * (const(1.0) - fc * (const(1.0) + m_) - m_ * bias / vj_)
    return (
        Case(
            When(GreaterThan(bias, -fc * vj_), then=depleted),
            default=forward,
            output_field=FLOAT,
        )
        + cp_
    )


def lot_c(bias) -> Combinable:
    """C [F] of a lot summary's median unit (columns cjo_med, vj_med, m_med, cp_med)."""
    return junction_c(bias, "cjo_med", "vj_med", "m_med", "cp_med")


def branch_c(cj, coupling_f: float | None) -> Combinable:
    """Junction branch seen by the tank: C_j, or C_j·Cc/(C_j + Cc) through a coupling Cc."""
    if coupling_f is None:
        return cj
    cc = const(coupling_f)
    return cj * cc / (cj + cc)


def as_float(expr) -> Combinable:
    """Wrap an arithmetic expression with a float output type for annotations."""
    from django.db.models import ExpressionWrapper

    return ExpressionWrapper(expr, output_field=FLOAT)
