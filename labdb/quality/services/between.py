"""Between-lot judgement: individuals chart of lot medians, rank shift, capability (Cpk)."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from labdb.quality.services.ranktest import RankPool
from labdb.quality.services.rules import (
    FIGURE_LABELS,
    MIN_BASELINE_LOTS,
    MIN_UNITS_SHIFT,
    SHIFT_ALPHA,
    Proposal,
    min_cpk,
)
from labdb.quality.services.summaries import JUDGED
from labdb.stats import cpk, holm, individuals_limits, shifted_figures, western_electric

#: √(π/2): standard error of a sample median over that of the mean, for normal data.
MEDIAN_SE_FACTOR = float(np.sqrt(np.pi / 2.0))


@dataclass
class LotPoint:
    """One lot in received order, as the between-lot rules see it."""

    lot: int
    medians: dict  # figure -> lot median (unit of the figure)
    sigmas: dict  # figure -> MAD-based σ of the lot's units (unit of the figure)
    units: dict  # figure -> ndarray of unit values, shape (n_units,)
    stored: dict = field(default_factory=dict)  # between-lot results kept from an earlier run


def _f(x) -> float | None:
    x = float(x)
    return x if np.isfinite(x) else None


def median_floor(sigmas, n: int) -> float:
    """Smallest believable σ of a lot median: its sampling error from within-lot spread.

    √(π/2)·σ_w/√n is the standard error of the median of n normal values (asymptotic;
    Kendall & Stuart, from memory), with σ_w pooled (root mean square) over the baseline
    lots' MAD-based σ. Lot medians cannot scatter less than this, whatever the moving range
    of a few earlier lots happens to show.

    Parameters
    ----------
    sigmas : array_like, shape (k,)
        MAD-based σ of each baseline lot (unit of the figure).
    n : int
        Units in the judged lot.
    """
    sig = np.asarray(sigmas, dtype=float)
    return float(MEDIAN_SE_FACTOR * np.sqrt(np.mean(sig**2)) / np.sqrt(n))


def _chart_point(points: list[LotPoint], i: int, name: str, baseline: list[int]) -> dict:
    """Individuals-chart judgement of lot ``i``'s median from the baseline lots before it.

    Limits are x̄ ± 3σ with x̄ the mean of the baseline medians and σ the larger of MR̄/d2
    (the e-Handbook's individuals chart, x̄ ± 2.66·MR̄) and :func:`median_floor`. The floor
    matters while few lots exist: two or three moving ranges can come out far smaller than
    the sampling noise of a lot median by chance, and a chart built on them flags ordinary
    lots. The baseline leaves out earlier lots that broke rule 1 (common practice when
    setting limits: out-of-control points are not part of the process), so one drifted lot
    does not pull the centre line and set off run rules for the lots after it. Western
    Electric rules 1–4 use the same x̄ and σ on the lot and the 7 before it.
    """
    lim = individuals_limits([points[j].medians[name] for j in baseline])
    floor = median_floor([points[j].sigmas[name] for j in baseline], len(points[i].units[name]))
    sigma = max(lim.sigma, floor)
    recent = [p.medians[name] for p in points[max(0, i - 7) : i + 1]]
    hits = [h for h in western_electric(recent, lim.center, sigma) if h.index == len(recent) - 1]
    return {
        "value": points[i].medians[name],
        "center": lim.center,
        "mr_bar": lim.mr_bar,
        "sigma_mr": lim.sigma,
        "sigma_floor": floor,
        "sigma": sigma,
        "ucl": lim.center + 3.0 * sigma,
        "lcl": lim.center - 3.0 * sigma,
        "baseline_lots": len(baseline),
        "excluded_lots": i - len(baseline),
        "hits": [{"rule": h.rule, "text": h.description} for h in hits],
    }


def judge_sequence(
    points: list[LotPoint], todo: set[int] | None, tolerance: float
) -> dict[int, dict]:
    """Chart and rank-test results of lots in received order, each against the lots before it.

    Parameters
    ----------
    points : list of LotPoint
        Lots of one part and condition set in received order.
    todo : set of int or None
        Positions to judge; the others keep ``stored`` (which still decides exclusions).
        None judges every lot.
    tolerance : float
        Smallest relative median shift worth a flag [1] (the part's ``shift_tolerance``).

    Returns
    -------
    dict of int to dict
        Position → ``{"chart": {figure: {...}}, "shift": {figure: {...}}}``; a rule is
        absent while it cannot judge (fewer than 3 baseline lots; too few units).
    """
    pools = {name: RankPool() for name in JUDGED}
    excluded: dict[str, set[int]] = {name: set() for name in JUDGED}
    out = {}
    for i, point in enumerate(points):
        if todo is None or i in todo:
            result: dict = {"chart": {}, "shift": {}}
            for name in JUDGED:
                baseline = [j for j in range(i) if j not in excluded[name]]
                if len(baseline) >= MIN_BASELINE_LOTS:
                    result["chart"][name] = _chart_point(points, i, name, baseline)
            n_new = len(point.units[JUDGED[0]])
            if i >= 1 and n_new >= MIN_UNITS_SHIFT and pools[JUDGED[0]].size() >= MIN_UNITS_SHIFT:
                result["shift"] = _shift(pools, point, tolerance)
            out[i] = result
        else:
            result = point.stored
        for name in JUDGED:
            if any(h["rule"] == 1 for h in result.get("chart", {}).get(name, {}).get("hits", [])):
                excluded[name].add(i)
            pools[name].add(point.units[name])
    return out


def _shift(pools: dict, point: LotPoint, tolerance: float) -> dict:
    """Mann–Whitney of the lot against every earlier lot's units, Holm across figures."""
    tests = {name: pools[name].test(point.units[name]) for name in JUDGED}
    flagged = shifted_figures(tests, alpha=SHIFT_ALPHA, tolerance=tolerance)
    adjusted = holm([tests[name].p_value for name in JUDGED])
    out = {}
    for name, p_adj in zip(JUDGED, adjusted, strict=True):
        t = tests[name]
        out[name] = {
            "p_value": t.p_value,
            "p_holm": float(p_adj),
            "shift_rel": _f(t.median_shift_rel),
            "u": t.statistic,
            "n_new": t.n_new,
            "n_earlier": t.n_earlier,
            "alpha": SHIFT_ALPHA,
            "tolerance": tolerance,
            "flagged": flagged[name],
        }
    return out


def judge_lot(points: list[LotPoint], i: int, tolerance: float) -> dict:
    """The between-lot results of lot ``i`` alone (every earlier lot judged on the way)."""
    return judge_sequence(points[: i + 1], None, tolerance)[i]


def capability(part, units: list[dict]) -> dict:
    """Cpk of a lot's units against the part's spec limits, per figure with a limit.

    Parameters
    ----------
    part : Part
        ``spec_c_min_f``/``spec_c_max_f`` [F] apply to ``c_spec`` (C at ``spec_bias_v``);
        ``spec_min_swing`` [1] is a lower limit on ``swing``.
    units : list of dict
        ``LotSummary.figures["units"]``.

    Returns
    -------
    dict
        figure → ``{"cpk", "cpu", "cpl", "mean", "sigma", "n", "lsl", "usl"}``; figures
        with no limit or fewer than two units are absent.
    """
    specs = {}
    if part.spec_bias_v is not None and (
        part.spec_c_min_f is not None or part.spec_c_max_f is not None
    ):
        specs["c_spec"] = (part.spec_c_min_f, part.spec_c_max_f)
    if part.spec_min_swing is not None:
        specs["swing"] = (part.spec_min_swing, None)
    out = {}
    for name, (lsl, usl) in specs.items():
        vals = [u["figures"].get(name) for u in units]
        vals = [v for v in vals if v is not None]
        if len(vals) < 2:
            continue
        res = cpk(vals, lsl=lsl, usl=usl)
        out[name] = {
            "cpk": _f(res.cpk),
            "cpu": None if res.cpu is None else _f(res.cpu),
            "cpl": None if res.cpl is None else _f(res.cpl),
            "mean": res.mean,
            "sigma": res.sigma,
            "n": res.n,
            "lsl": lsl,
            "usl": usl,
            "target": min_cpk(),
            # Decided here, where ±inf (σ = 0) is still a number; JSON keeps it as None.
            "below_target": bool(res.cpk < min_cpk()),
        }
    return out


def lot_proposals(part, lot_id: int, condition: str, digest: dict) -> list[Proposal]:
    """Findings on a lot from its digest: stored between-lot results and capability."""
    out = []
    between = digest.get("between", {})

    def make(rule, figure, summary, evidence, value, limit):
        return Proposal(
            part.pk, lot_id, None, rule, figure, condition, summary[:300], evidence, value, limit
        )

    for name, ch in between.get("chart", {}).items():
        if ch["hits"]:
            side_limit = ch["ucl"] if ch["value"] > ch["center"] else ch["lcl"]
            rules = ", ".join(h["text"] for h in ch["hits"])
            out.append(
                make(
                    "lot_chart",
                    name,
                    f"lot median {FIGURE_LABELS[name]} against the {ch['baseline_lots']} earlier lots: {rules}",
                    ch,
                    ch["value"],
                    side_limit,
                )
            )
    for name, sh in between.get("shift", {}).items():
        if sh["flagged"]:
            out.append(
                make(
                    "lot_shift",
                    name,
                    f"{FIGURE_LABELS[name]} moved {sh['shift_rel'] * 100:+.1f} % against earlier lots "
                    f"(Mann–Whitney, Holm-adjusted p = {sh['p_holm']:.2g}; tolerance {sh['tolerance'] * 100:g} %)",
                    sh,
                    sh["shift_rel"],
                    sh["tolerance"] if sh["shift_rel"] > 0 else -sh["tolerance"],
                )
            )
    for name, cap in digest.get("cpk", {}).items():
        if cap["below_target"]:
            shown = "−∞" if cap["cpk"] is None else f"{cap['cpk']:.2f}"
            out.append(
                make(
                    "lot_cpk",
                    name,
                    f"Cpk of {FIGURE_LABELS[name]} is {shown} (target ≥ {cap['target']:g})",
                    cap,
                    cap["cpk"],
                    cap["target"],
                )
            )
    return out
