"""Tank finder: which parts tune L ∥ C_fixed ∥ junction across a band with the bias available.

The tank covers [f_low, f_high] over the bias range [V_a, V_b] exactly when its total
capacitance C_t = C_fixed + C_j·Cc/(C_j + Cc) satisfies C_t(V_a) ≥ K_low and
C_t(V_b) ≤ K_high, with K = 1/((2π·f)²·L) (Thomson's formula solved for C; f rises with
reverse bias). The database evaluates both for every lot's median unit and ranks parts by
their worst lot's margin min(√(C_t(V_a)/K_low), √(K_high/C_t(V_b))) — a frequency ratio, ≥ 1
when the lot covers. Only the shortlisted parts are refined in Python with the physics core:
band coverage of each lot-median unit, and coverage by each unit fit.
"""

from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass

from django.db.models import BooleanField, Count, ExpressionWrapper, F, Min, Q, Sum
from django.db.models.functions import Least, Sqrt

from labdb.catalog.models import Part
from labdb.physics import band_coverage, coupled, fixed_capacitance_to_centre
from labdb.search.expressions import as_float, branch_c, const, lot_c
from labdb.search.queries import TankQuery
from labdb.search.results import Suggestion, TankCandidate, TankLot, TankResult
from labdb.search.rows import (
    condition_rows,
    spans,
    summaries,
    unit_capacitances,
    unlinked_summaries,
)

TWO_PI = 2.0 * math.pi


def needed_capacitance(f_hz: float, inductance_h: float) -> float:
    """Total tank capacitance [F] that resonates ``inductance_h`` [H] at ``f_hz`` [Hz]."""
    return 1.0 / ((TWO_PI * f_hz) ** 2 * inductance_h)


def _branches(q: TankQuery):
    va, vb = const(q.bias_min_v), const(q.bias_max_v)
    return branch_c(lot_c(va), q.coupling_f), branch_c(lot_c(vb), q.coupling_f)


def tank_rows(q: TankQuery):
    """Condition-matching lot summaries annotated with ``cover`` and ``spans``.

    ``cover`` = min(C_t(V_a)/K_low, K_high/C_t(V_b)) is a capacitance ratio, ≥ 1 exactly
    when the lot-median unit covers the band; its square root is the frequency margin.
    """
    k_low = needed_capacitance(q.f_low_hz, q.inductance_h)
    k_high = needed_capacitance(q.f_high_hz, q.inductance_h)
    branch_a, branch_b = _branches(q)
    fixed = const(q.fixed_f)
    cover = Least((fixed + branch_a) / const(k_low), const(k_high) / (fixed + branch_b))
    span = spans(const(q.bias_min_v), const(q.bias_max_v))
    return condition_rows(q).annotate(
        cover=as_float(cover),
        spans=ExpressionWrapper(span, output_field=BooleanField()),
    )


def with_bare_ratio(rows, q: TankQuery):
    """Annotate the frequency ratio the junction alone gives over the bias range.

    With no fixed capacitance the ratio f(V_b)/f(V_a) = √(branch(V_a)/branch(V_b)) is the
    widest any tank with this lot can reach: fixed capacitance only narrows it.
    """
    branch_a, branch_b = _branches(q)
    return rows.annotate(bare_ratio=as_float(Sqrt(branch_a / branch_b)))


@dataclass
class _Totals:
    parts: int = 0
    lots: int = 0
    parts_covering: int = 0
    beyond_rows: int = 0
    beyond_parts: int = 0


def rank_tank_parts(q: TankQuery, rows) -> tuple[list[int], _Totals]:
    """Parts by worst-lot margin, best first, and the totals, in one grouped pass.

    Only the worst lot's margin is aggregated: each further aggregate over ``cover`` would
    evaluate the junction model again for every row.
    """
    counted = Q() if q.include_extrapolated else Q(spans=True)
    groups = (
        rows.values("part_id")
        .annotate(
            worst=Min("cover", filter=counted),
            n_units_sum=Sum("n_units", filter=counted),
            n_rows=Count("lot_id", filter=counted),
            n_beyond=Count("lot_id", filter=Q(spans=False)),
        )
        .filter(Q(n_units_sum__gte=q.min_units) | Q(n_beyond__gt=0))
        .order_by(F("worst").desc(nulls_last=True), "part_id")
    )
    ids, t = [], _Totals()
    for pid, worst, units, n_rows, n_beyond in groups.values_list(
        "part_id", "worst", "n_units_sum", "n_rows", "n_beyond"
    ):
        if n_beyond:
            t.beyond_rows += n_beyond
            t.beyond_parts += 1
        if units is None or units < q.min_units:
            continue
        ids.append(pid)
        t.parts += 1
        t.lots += n_rows
        t.parts_covering += worst >= 1.0
    return ids, t


def _some_lot_covers(rows, q: TankQuery, ids: list[int], totals: _Totals) -> bool:
    if totals.parts_covering:
        return True
    if not ids:
        return False
    # A part whose worst lot falls short may still have a covering lot among its others.
    counted = rows if q.include_extrapolated else rows.filter(spans=True)
    covering = counted.filter(cover__gte=1.0)
    if q.min_units > 1:  # only parts with enough units measured count
        covering = covering.filter(part_id__in=ids)
    return covering.exists()


def find_tanks(q: TankQuery) -> TankResult:
    """Parts and lots whose fitted junctions tune the tank across the band.

    Parameters
    ----------
    q : TankQuery
        Validated here; :class:`~labdb.search.errors.SearchInputError` names bad parameters.

    Returns
    -------
    TankResult
        Shortlisted parts (best worst-lot margin first), how many lots and parts cover the
        band for their median unit, a suggested centring fixed capacitance, and — when no
        lot covers — the reason in plain words.
    """
    q = q.validated()
    rows = tank_rows(q)
    ids, totals = rank_tank_parts(q, rows)
    candidates = [c for c in _refine(q, rows, ids[: q.max_parts]) if c.lots]
    warnings = _warnings(q, totals, candidates)
    refusal, suggestion = "", None
    if not _some_lot_covers(rows, q, ids, totals):
        counted = rows if q.include_extrapolated else rows.filter(spans=True)
        refusal, suggestion = _refusal(q, counted, totals, set(ids))
    elif candidates:
        limiting = min(candidates[0].lots, key=lambda lot: lot.margin)
        suggestion = _suggest(q, candidates[0].part_number, limiting.code, limiting.params)
    return TankResult(
        query=q,
        candidates=tuple(candidates),
        n_parts=totals.parts,
        n_lots=totals.lots,
        n_parts_covering=totals.parts_covering,
        suggestion=suggestion,
        refusal=refusal,
        warnings=tuple(warnings),
    )


def _suggest(q: TankQuery, part_number: str, lot_code: str, params: dict) -> Suggestion:
    value, reason = fixed_capacitance_to_centre(
        params,
        q.inductance_h,
        q.coupling_f,
        (q.bias_min_v, q.bias_max_v),
        q.f_low_hz,
        q.f_high_hz,
        return_reason=True,
    )
    return Suggestion(part_number=part_number, lot_code=lot_code, fixed_f=value, reason=reason)


def _refusal(q: TankQuery, counted, totals: _Totals, eligible: set[int]):
    """Why no lot covers, and the lot with the widest tuning ratio (the best candidate)."""
    if not totals.lots:
        return (
            "No lot summary matches the part filters and measurement conditions "
            "(and spans the bias range, unless extrapolated lots are included).",
            None,
        )
    band_ratio = q.f_high_hz / q.f_low_hz
    widest = with_bare_ratio(counted, q).order_by(F("bare_ratio").desc(), "lot_id")
    fields = (
        "part_id",
        "part__part_number",
        "lot__code",
        "cjo_med",
        "vj_med",
        "m_med",
        "cp_med",
        "bare_ratio",
    )
    best = next(
        r for r in widest.values(*fields).iterator(chunk_size=20) if r["part_id"] in eligible
    )
    bare = best["bare_ratio"]
    where = f"{best['part__part_number']} lot {best['lot__code']}"
    if bare < band_ratio:
        return (
            f"The band is not reachable by any fixed capacitance with these parts: it needs a "
            f"frequency ratio of {band_ratio:.4g} over {q.bias_min_v:g}–{q.bias_max_v:g} V, and "
            f"the widest any counted lot gives, even with no fixed capacitance, is "
            f"{bare:.4g} ({where}). Widen the bias range, narrow the band, or "
            "choose parts with more swing.",
            None,
        )
    params = {
        "cjo": best["cjo_med"],
        "vj": best["vj_med"],
        "m": best["m_med"],
        "cp": best["cp_med"],
    }
    suggestion = _suggest(q, best["part__part_number"], best["lot__code"], params)
    head = (
        f"No lot covers the band with {q.fixed_f * 1e12:.4g} pF fixed. The widest tuning "
        f"ratio, {bare:.4g} ({where}), is enough for the band's "
        f"{band_ratio:.4g}"
    )
    if suggestion.fixed_f is not None:
        return head + ": it covers the band with a different fixed capacitance (below).", suggestion
    return head + f", but its range cannot be centred on the band: {suggestion.reason}.", suggestion


def _refine(q: TankQuery, rows, ids: list[int]) -> list[TankCandidate]:
    if not ids:
        return []
    parts = {p["id"]: p for p in Part.objects.filter(id__in=ids).values()}
    lot_rows = rows.filter(part_id__in=ids).order_by("received_on", "lot_id")
    if not q.include_extrapolated:
        lot_rows = lot_rows.filter(spans=True)
    by_part: dict[int, list[dict]] = defaultdict(list)
    for r in lot_rows.values(
        "lot_id",
        "lot__code",
        "part_id",
        "received_on",
        "cjo_med",
        "vj_med",
        "m_med",
        "cp_med",
        "cover",
        "spans",
        "unit_fits",
    ):
        by_part[r["part_id"]].append(r)
    units = _unit_margins(q, [r for rs in by_part.values() for r in rs])
    out = []
    for pid in ids:
        lots = tuple(
            sorted(
                (_lot(q, r, units.get(r["lot_id"], [])) for r in by_part[pid]),
                key=lambda lot: lot.margin,
            )
        )
        part = parts[pid]
        warnings = []
        rated = part["rated_reverse_v"]
        if rated is not None and q.bias_max_v > rated:
            warnings.append(
                f"the bias range reaches {q.bias_max_v:g} V, beyond this part's "
                f"rated {rated:g} V reverse"
            )
        if any(lot.extrapolated for lot in lots):
            warnings.append("some lots are extrapolated beyond their measured bias range")
        out.append(
            TankCandidate(
                part_id=pid,
                part_number=part["part_number"],
                kind=part["kind"],
                rated_reverse_v=rated,
                lots=lots,
                worst_margin=min((lot.margin for lot in lots), default=math.nan),
                warnings=tuple(warnings),
            )
        )
    return out


def _lot(q: TankQuery, r: dict, units: list[tuple[float, str, tuple[float, float]]]) -> TankLot:
    params = {"cjo": r["cjo_med"], "vj": r["vj_med"], "m": r["m_med"], "cp": r["cp_med"]}
    coverage = band_coverage(
        params,
        q.inductance_h,
        q.fixed_f,
        q.coupling_f,
        (q.bias_min_v, q.bias_max_v),
        q.f_low_hz,
        q.f_high_hz,
    )
    worst = min(units, default=None)
    return TankLot(
        lot_id=r["lot_id"],
        code=r["lot__code"],
        received_on=r["received_on"],
        params=params,
        coverage=coverage,
        margin=math.sqrt(r["cover"]),
        n_units=len(units),
        n_covering=sum(1 for m, _, _ in units if m >= 1.0),
        worst="—" if worst is None else worst[1],
        worst_f_hz=None if worst is None else worst[2],
        worst_margin=None if worst is None else worst[0],
        extrapolated=not r["spans"],
    )


def thomson_hz(inductance_h: float, capacitance_f: float) -> float:
    """Resonant frequency 1/(2π√(L·C)) [Hz] of L [H] with total capacitance C [F]."""
    return 1.0 / (TWO_PI * math.sqrt(inductance_h * capacitance_f))


def _unit_margins(q: TankQuery, rows: list[dict]):
    """Per lot: (margin, unit label, (f at bias_min, f at bias_max) [Hz]) of each unit.

    From the unit fits the lots' summaries hold (each unit's most recent fit): junction
    capacitance at both ends of the bias range, the tank's total capacitance, and Thomson's
    formula.
    """
    lot_ids, labels, c_a, c_b = unit_capacitances(
        (r["lot_id"], r["unit_fits"], (q.bias_min_v, q.bias_max_v)) for r in rows
    )
    out: dict[int, list] = defaultdict(list)
    for lot_id, label, ca, cb in zip(lot_ids, labels, c_a.tolist(), c_b.tolist(), strict=True):
        fa = thomson_hz(q.inductance_h, q.fixed_f + coupled(ca, q.coupling_f))
        fb = thomson_hz(q.inductance_h, q.fixed_f + coupled(cb, q.coupling_f))
        margin = min(q.f_low_hz / fa, fb / q.f_high_hz)
        out[lot_id].append((margin, f"unit {label}", (fa, fb)))
    return out


def _warnings(q: TankQuery, totals: _Totals, candidates: list[TankCandidate]) -> list[str]:
    out = []
    n, parts = totals.beyond_rows, totals.beyond_parts
    if n and not q.include_extrapolated:
        out.append(
            f"{summaries(n)} of {parts} part(s) were left out: the bias range "
            f"{q.bias_min_v:g}–{q.bias_max_v:g} V reaches beyond the range those lots were "
            "measured over. Include extrapolated lots to see them, marked."
        )
    elif n:
        out.append(
            f"{summaries(n)} of {parts} part(s) are judged beyond their measured bias range "
            "(marked ‘extrapolated’)."
        )
    over = [
        c.part_number
        for c in candidates
        if c.rated_reverse_v is not None and q.bias_max_v > c.rated_reverse_v
    ]
    if over:
        out.append(
            f"The bias range reaches {q.bias_max_v:g} V, beyond the rated reverse voltage of "
            f"{', '.join(over)}. Keep the junction within its rating."
        )
    unlinked = unlinked_summaries()
    if unlinked:
        out.append(
            f"{summaries(unlinked)} not yet linked to their part, so not searched; "
            "recomputing their lots fixes this."
        )
    return out
