"""What the quality pages show, read from stored summaries and flags (no recomputation)."""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

import numpy as np

from labdb.physics import junction_capacitance_many
from labdb.quality.models import Flag, FlagState, LotSummary
from labdb.quality.services.conditions import condition_key, condition_label, parse_condition
from labdb.quality.services.recompute import lot_order
from labdb.quality.services.rules import SHIFT_ALPHA
from labdb.quality.services.summaries import JUDGED
from labdb.stats import holm, pointwise_band, rank_shift

#: The lot page's history band pools the units of at most this many lots received before it.
HISTORY_LOTS = 25


@dataclass
class Condition:
    """A condition set offered on a page."""

    key: str
    label: str
    n_lots: int


def conditions_of(summaries) -> list[Condition]:
    """Condition sets of some summaries, the one with most lots first (dark before lit)."""
    counts = Counter((s.illumination, s.temperature_c) for s in summaries)
    ordered = sorted(counts, key=lambda c: (-counts[c], c[0] != "dark", abs(c[1] - 25.0), c))
    return [Condition(condition_key(*c), condition_label(*c), counts[c]) for c in ordered]


def pick(conditions: list[Condition], wanted: str | None) -> Condition | None:
    """The requested condition set when offered, else the first."""
    for c in conditions:
        if c.key == wanted:
            return c
    return conditions[0] if conditions else None


def _in(summaries, cond: Condition | None) -> list:
    if cond is None:
        return []
    illum, band = parse_condition(cond.key)
    return [s for s in summaries if s.illumination == illum and s.temperature_c == band]


def part_overview(part, wanted: str | None = None) -> dict:
    """Lots table and lot-median history of one part in one condition set."""
    summaries = list(
        LotSummary.objects.filter(lot__part=part).select_related("lot").defer("figures", "band")
    )
    conds = conditions_of(summaries)
    cond = pick(conds, wanted)
    order = lot_order(part)
    chosen = sorted(_in(summaries, cond), key=lambda s: order[s.lot_id])
    open_flags = Counter(
        Flag.objects.filter(part=part, active=True, state=FlagState.OPEN).values_list(
            "lot_id", flat=True
        )
    )
    flagged = set(
        Flag.objects.filter(
            part=part,
            active=True,
            rule__in=("lot_chart", "lot_shift"),
            condition=cond.key if cond else "",
        ).values_list("lot_id", "figure")
    )
    rows = []
    for s in chosen:
        caps = s.digest.get("cpk", {})
        worst = [c["cpk"] for c in caps.values() if c.get("cpk") is not None]
        rows.append(
            {
                "summary": s,
                "lot": s.lot,
                "cpk": min(worst) if worst else None,
                "cpk_below": any(c.get("below_target") for c in caps.values()),
                "open_flags": open_flags.get(s.lot_id, 0),
                "chart": s.digest.get("between", {}).get("chart", {}),
                "flagged": sorted(f for lot, f in flagged if lot == s.lot_id),
            }
        )
    window = chosen[-1].digest.get("window_v") if chosen else None
    return {
        "conditions": conds,
        "condition": cond,
        "rows": rows,
        "window_v": window,
        "window_source": chosen[-1].digest.get("window_source") if chosen else "",
        "flagged": flagged,
    }


def unit_curves(units: list[dict], grid: np.ndarray, clip: bool = False) -> np.ndarray:
    """Each unit's fitted curve on ``grid`` [F], shape (n_units, n_grid); median over sweeps.

    With ``clip`` a unit is NaN outside the bias range it was measured over.
    """
    out = np.full((len(units), grid.size), np.nan)
    for k, u in enumerate(units):
        p = np.array([[s["cjo"], s["vj"], s["m"], s["cp"]] for s in u["sweeps"]], dtype=float)
        out[k] = np.median(junction_capacitance_many(grid, *p.T), axis=0)
        if clip:
            lo = min(s["bias_min_v"] for s in u["sweeps"])
            hi = max(s["bias_max_v"] for s in u["sweeps"])
            out[k, (grid < lo - 1e-9) | (grid > hi + 1e-9)] = np.nan
    return out


def lot_overview(lot, wanted: str | None = None) -> dict:
    """One lot in one condition set: units, band, history band, part-wide scatter, flags."""
    part = lot.part
    mine = list(LotSummary.objects.filter(lot=lot))
    conds = conditions_of(mine)
    cond = pick(conds, wanted)
    summary = _in(mine, cond)[0] if cond else None
    out = {"conditions": conds, "condition": cond, "summary": summary, "units": [], "lot_fit": None}
    if summary is None:
        return out
    flags = list(
        Flag.objects.filter(lot=lot, active=True, condition=cond.key).select_related("unit")
    )
    by_unit: dict = {}
    for f in flags:
        by_unit.setdefault(f.unit_id, []).append(f)
    units = summary.figures["units"]
    out["units"] = [dict(u, flags=by_unit.get(u["unit"], [])) for u in units]
    out["lot_flags"] = by_unit.get(None, [])
    out["lot_fit"] = summary.fits.order_by("-version").first()
    band = summary.band or {}
    grid = np.asarray(band.get("bias_v", []), dtype=float)
    out["grid"] = grid
    out["curves"] = unit_curves(units, grid) if grid.size else np.zeros((0, 0))
    order = lot_order(part)
    peers = sorted(
        _in(
            LotSummary.objects.filter(lot__part=part)
            .select_related("lot")
            .defer("figures", "band"),
            cond,
        ),
        key=lambda s: order[s.lot_id],
    )
    earlier = [s for s in peers if order[s.lot_id] < order[lot.pk]][-HISTORY_LOTS:]
    out["history"] = None
    if grid.size and earlier:
        # Units' curves need their fit parameters: the full figures of the recent earlier lots.
        figures = LotSummary.objects.filter(pk__in=[s.pk for s in earlier]).values_list(
            "figures", flat=True
        )
        pooled = np.vstack([unit_curves(f["units"], grid, clip=True) for f in figures])
        lo, med, hi = pointwise_band(pooled)
        out["history"] = {
            "lots": len(earlier),
            "units": pooled.shape[0],
            "p10": lo,
            "p50": med,
            "p90": hi,
        }
    out["scatter"] = [
        {
            "lot": s.lot,
            "current": s.lot_id == lot.pk,
            "c_low": s.digest["values"]["c_low"],
            "swing": s.digest["values"]["swing"],
            "labels": s.digest.get("labels", []),
        }
        for s in peers
    ]
    return out


def compare_lots(part, lot_ids: list[int], wanted: str | None = None) -> dict:
    """Two or more lots side by side: bands and, against the earliest, rank-test differences.

    Every lot is compared with the earliest selected lot on each judged figure by a
    two-sided Mann–Whitney test; Holm's correction runs across all tests in the table, and a
    difference counts only when significant (α = 0.05) and beyond the part's shift tolerance.
    """
    order = lot_order(part)
    summaries = list(
        LotSummary.objects.filter(lot__part=part, lot_id__in=lot_ids)
        .select_related("lot")
        .defer("figures")
    )
    conds = conditions_of(summaries)
    cond = pick(conds, wanted)
    chosen = sorted(_in(summaries, cond), key=lambda s: order[s.lot_id])
    out = {"conditions": conds, "condition": cond, "summaries": chosen, "rows": []}
    if len(chosen) < 2:
        return out
    ref = chosen[0]
    tests = []
    for s in chosen[1:]:
        for name in JUDGED:
            a = s.digest["values"][name]
            b = ref.digest["values"][name]
            tests.append((s, name, rank_shift(a, b)))
    adjusted = holm([t.p_value for _, _, t in tests])
    tol = part.shift_tolerance
    for (s, name, t), p_adj in zip(tests, adjusted, strict=True):
        out["rows"].append(
            {
                "lot": s.lot,
                "figure": name,
                "ref_median": ref.digest["stats"][name]["median"],
                "median": s.digest["stats"][name]["median"],
                "shift_rel": t.median_shift_rel,
                "p_value": t.p_value,
                "p_holm": float(p_adj),
                "n": (t.n_new, t.n_earlier),
                "different": bool(p_adj < SHIFT_ALPHA and abs(t.median_shift_rel) > tol),
            }
        )
    out["reference"] = ref
    out["tolerance"] = tol
    return out
