"""Process capability of a lot against spec limits: Cpk (Montgomery)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from labdb.stats.errors import StatsInputError, finite_1d, finite_scalar


@dataclass(frozen=True)
class CapabilityResult:
    """Capability indices of one lot for one figure.

    Attributes
    ----------
    cpk : float
        min(cpu, cpl) over the limits given [dimensionless].
    cpu : float or None
        (USL − μ)/(3σ) [dimensionless]; None without an upper limit.
    cpl : float or None
        (μ − LSL)/(3σ) [dimensionless]; None without a lower limit.
    mean : float
        Sample mean μ, unit of the values.
    sigma : float
        Sample standard deviation σ (ddof = 1), unit of the values.
    n : int
        Number of values.
    """

    cpk: float
    cpu: float | None
    cpl: float | None
    mean: float
    sigma: float
    n: int


def cpk(values: Any, lsl: float | None = None, usl: float | None = None) -> CapabilityResult:
    """Cpk = min(USL − μ, μ − LSL)/(3σ) (Montgomery, *Introduction to Statistical Quality Control*).

    μ is the sample mean and σ the sample standard deviation with ddof = 1 (the usual
    unbiased-variance estimate; the lot's units are a sample of the process). With only one
    limit the index is one-sided (Cpu or Cpl). Normality is assumed, as for every Cpk.
    When all values are equal (σ = 0) an index is +inf if the mean is inside that limit,
    0 on it and −inf beyond it.

    Parameters
    ----------
    values : array_like, shape (n,), n ≥ 2
        Finite values of one figure over a lot's units, any unit (e.g. [F]).
    lsl, usl : float or None, optional
        Lower and upper spec limits, unit of ``values``; at least one; lsl < usl when both.

    Returns
    -------
    CapabilityResult
    """
    arr = finite_1d(values, "values", min_size=0)
    if arr.size < 2:
        raise StatsInputError(f"values has {arr.size} point(s); Cpk needs at least 2")
    if lsl is None and usl is None:
        raise StatsInputError("cpk needs a spec limit: give lsl, usl or both")
    lo = None if lsl is None else finite_scalar(lsl, "lsl")
    hi = None if usl is None else finite_scalar(usl, "usl")
    if lo is not None and hi is not None and not lo < hi:
        raise StatsInputError(f"lsl={lo} is not below usl={hi}")
    mean = float(np.mean(arr))
    sigma = float(np.std(arr, ddof=1))
    cpu = None if hi is None else _index(hi - mean, sigma)
    cpl = None if lo is None else _index(mean - lo, sigma)
    return CapabilityResult(
        cpk=min(c for c in (cpu, cpl) if c is not None),
        cpu=cpu,
        cpl=cpl,
        mean=mean,
        sigma=sigma,
        n=int(arr.size),
    )


def _index(margin: float, sigma: float) -> float:
    """margin/(3σ), with σ = 0 read as infinite capability on the right side of the limit."""
    if sigma > 0.0:
        return margin / (3.0 * sigma)
    if margin == 0.0:
        return 0.0
    return float(np.copysign(np.inf, margin))
