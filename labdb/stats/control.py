"""Individuals (X–mR) control chart limits and Western Electric run rules."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from labdb.stats.errors import StatsInputError, finite_1d, finite_scalar

#: d2 for subgroups of n = 2 (the moving range of two points): E[range]/σ = 2/√π = 1.1284.
D2_MR = 2.0 / math.sqrt(math.pi)

#: d3 for n = 2: sd[range]/σ = √(2 − 4/π) = 0.8525.
D3_MR = math.sqrt(2.0 - 4.0 / math.pi)

#: Individuals-chart factor 3/d2 = 2.6587, tabled as 2.66 (e-Handbook §6.3.2; Montgomery).
E2_INDIVIDUALS = 3.0 / D2_MR

#: Moving-range chart factor D4 = 1 + 3·d3/d2 = 3.2665, tabled as 3.267.
D4_MR = 1.0 + 3.0 * D3_MR / D2_MR

#: Fewest baseline points accepted: two moving ranges are the least that say anything.
MIN_BASELINE = 3

_RULE_TEXT = {
    1: "one point beyond 3σ",
    2: "2 of 3 consecutive points beyond 2σ",
    3: "4 of 5 consecutive points beyond 1σ",
    4: "8 consecutive points",
}


@dataclass(frozen=True)
class ControlLimits:
    """Limits of an individuals chart and its moving-range chart.

    All values share the unit of the charted figure (e.g. [F] for lot-median capacitance).

    Attributes
    ----------
    center : float
        Center line, the baseline mean x̄.
    mr_bar : float
        Mean moving range MR̄ of consecutive baseline points.
    sigma : float
        Short-term σ estimate MR̄/d2 (d2 = 2/√π).
    ucl, lcl : float
        x̄ ± 3σ = x̄ ± 2.66·MR̄.
    mr_ucl : float
        Upper limit of the moving-range chart, D4·MR̄ = 3.267·MR̄ (its lower limit is 0).
    """

    center: float
    mr_bar: float
    sigma: float
    ucl: float
    lcl: float
    mr_ucl: float


@dataclass(frozen=True)
class RuleHit:
    """One Western Electric rule triggered at one point.

    Attributes
    ----------
    index : int
        Position in the sequence of the point that completes the pattern.
    rule : int
        Rule number, 1 to 4 (see :func:`western_electric`).
    description : str
        Plain-language statement of the rule and the side it fired on.
    """

    index: int
    rule: int
    description: str


@dataclass(frozen=True)
class PointVerdict:
    """How one point of a sequence looks against the limits of the points before it.

    Attributes
    ----------
    index : int
        Position of the judged point.
    value : float
        The judged value, unit of the sequence.
    limits : ControlLimits
        Limits computed from points ``0 .. index−1`` only.
    hits : tuple of RuleHit
        Rules that this point triggers (empty when it is in control).
    """

    index: int
    value: float
    limits: ControlLimits
    hits: tuple[RuleHit, ...]


def individuals_limits(baseline: Any) -> ControlLimits:
    """Individuals (X) chart and moving-range chart limits from a baseline sequence.

    x̄ ± 3·MR̄/d2 with d2 = 2/√π for moving ranges of two points, and mR UCL = D4·MR̄
    (NIST/SEMATECH e-Handbook §6.3.2; Montgomery, *Introduction to Statistical Quality
    Control*). We use the exact constants 3/d2 = 2.6587 and D4 = 3.2665; the tabled 2.66 and
    3.267 are their roundings (< 0.05 % apart).

    Parameters
    ----------
    baseline : array_like, shape (n,), n ≥ 3
        Finite values in time order, any unit (e.g. lot-median capacitance [F]).

    Returns
    -------
    ControlLimits
        In the unit of ``baseline``. A baseline with no variation gives σ = 0 and limits on
        the center line.

    Raises
    ------
    StatsInputError
        Fewer than 3 points (the message gives the count) or a NaN/inf value.
    """
    arr = finite_1d(baseline, "baseline", min_size=0)
    if arr.size < MIN_BASELINE:
        raise StatsInputError(
            f"baseline has {arr.size} point(s); an individuals chart needs at least "
            f"{MIN_BASELINE} to estimate the moving range",
        )
    center = float(np.mean(arr))
    mr_bar = float(np.mean(np.abs(np.diff(arr))))
    sigma = mr_bar / D2_MR
    return ControlLimits(
        center=center,
        mr_bar=mr_bar,
        sigma=sigma,
        ucl=center + E2_INDIVIDUALS * mr_bar,
        lcl=center - E2_INDIVIDUALS * mr_bar,
        mr_ucl=D4_MR * mr_bar,
    )


def western_electric(values: Any, center: float, sigma: float) -> list[RuleHit]:
    """Western Electric run rules on a sequence (WE *Statistical Quality Control Handbook*, 1956).

    1. One point beyond 3σ from the center line.
    2. 2 of 3 consecutive points beyond 2σ, on the same side.
    3. 4 of 5 consecutive points beyond 1σ, on the same side.
    4. 8 consecutive points on the same side of the center line.

    "Beyond" is strict (a point exactly on a limit is inside) and a point exactly on the
    center line is on neither side, so it breaks a rule-4 run. A hit is reported at the point
    that completes the pattern, so that point itself must be one of the counted points;
    while a pattern continues, each new qualifying point is reported again. Near the start
    of the sequence the window is shorter (two first points both beyond 2σ on one side
    trigger rule 2 at index 1). With σ = 0 every point off the center line triggers rule 1.

    Parameters
    ----------
    values : array_like, shape (n,)
        Finite values in time order, any unit.
    center : float
        Center line, unit of ``values``.
    sigma : float
        Process standard deviation, unit of ``values``, ≥ 0.

    Returns
    -------
    list of RuleHit
        Sorted by index, then rule number.
    """
    arr = finite_1d(values, "values", min_size=0)
    c = finite_scalar(center, "center")
    s = _check_sigma(sigma)
    dev = arr - c
    hits: list[RuleHit] = []
    for i in range(arr.size):
        hits.extend(_hits_at(dev, i, s))
    return hits


def evaluate_sequence(values: Any, min_baseline: int = MIN_BASELINE) -> list[PointVerdict]:
    """Judge each point against limits from the points before it (a new lot against earlier lots).

    For every index i ≥ ``min_baseline``, limits come from points ``0 .. i−1`` with
    :func:`individuals_limits`; the run rules are then applied with those limits to the
    points up to i, and the rules that point i completes are reported.

    Parameters
    ----------
    values : array_like, shape (n,)
        Finite values in time order (e.g. lot medians [F]).
    min_baseline : int, optional
        Fewest earlier points before a point is judged, ≥ 3.

    Returns
    -------
    list of PointVerdict
        One per judged point, in order; empty when ``n ≤ min_baseline``.
    """
    if isinstance(min_baseline, bool) or not isinstance(min_baseline, int | np.integer):
        raise StatsInputError(f"min_baseline: expected an integer, got {min_baseline!r}")
    if min_baseline < MIN_BASELINE:
        raise StatsInputError(
            f"min_baseline is {min_baseline}; limits need at least {MIN_BASELINE} earlier points",
        )
    arr = finite_1d(values, "values", min_size=0)
    verdicts = []
    for i in range(int(min_baseline), arr.size):
        limits = individuals_limits(arr[:i])
        dev = arr[: i + 1] - limits.center
        hits = tuple(_hits_at(dev, i, limits.sigma))
        verdicts.append(PointVerdict(index=i, value=float(arr[i]), limits=limits, hits=hits))
    return verdicts


def _check_sigma(sigma: Any) -> float:
    """σ as a float ≥ 0, or StatsInputError."""
    s = finite_scalar(sigma, "sigma")
    if s < 0.0:
        raise StatsInputError(f"sigma is {s}; a standard deviation must be ≥ 0")
    return s


def _hits_at(dev: np.ndarray, i: int, sigma: float) -> list[RuleHit]:
    """Rules completed at index ``i`` of deviations ``dev`` from the center line."""
    hits = []
    for sign, side in ((1.0, "above"), (-1.0, "below")):
        d = sign * dev  # positive means on this side
        if d[i] > 3.0 * sigma:
            hits.append((1, side))
        # Rules 2 and 3: the completing point must itself count, else the pattern was
        # already complete (and reported) one point earlier.
        for rule, k, m, window in ((2, 2.0, 2, 3), (3, 1.0, 4, 5)):
            beyond = d[max(0, i - window + 1) : i + 1] > k * sigma
            if beyond[-1] and np.count_nonzero(beyond) >= m:
                hits.append((rule, side))
        if i >= 7 and np.all(d[i - 7 : i + 1] > 0.0):
            hits.append((4, side))
    hits.sort()
    return [
        RuleHit(index=i, rule=rule, description=f"rule {rule}: {_RULE_TEXT[rule]} {side} center")
        for rule, side in hits
    ]
