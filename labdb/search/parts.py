"""Part search: rank parts by fitted swing in the database, then refine one page with unit fits.

Stage 1 (database, every matching lot summary): evaluate the median unit's C(v1), C(v2) and
swing with :mod:`labdb.search.expressions`, leave out lots whose measured range the window
exceeds, group by part (worst-lot swing, capacitance range, units), filter and order.
Stage 2 (one page of parts only): the page's lot rows and open-flag counts; the lots'
median units and the unit fits their summaries hold are evaluated with the physics formula
in numpy and summarised in Python.
"""

from __future__ import annotations

import math
import statistics
from collections import defaultdict
from dataclasses import dataclass

import numpy as np
from django.db.models import (
    Avg,
    BooleanField,
    Case,
    Count,
    ExpressionWrapper,
    F,
    IntegerField,
    Max,
    Min,
    Q,
    Sum,
    Value,
    When,
)

from labdb.catalog.models import Part
from labdb.physics import junction_capacitance_many
from labdb.quality.models import Flag, FlagState
from labdb.search.expressions import as_float, const, lot_c
from labdb.search.queries import SearchQuery
from labdb.search.results import LotFigures, PartHit, SearchPage, UnitSpread
from labdb.search.rows import (
    EDGE_SLACK_V,
    condition_rows,
    plain_rows_sql,
    spans,
    sql_of,
    summaries,
    unit_capacitances,
    unlinked_summaries,
)

# Ties go to the part registered first: ordering by the id keeps the grouping to one column.
# (aggregate, SQL direction); a part without dated lots sorts last among the most recent.
_ORDER = {
    "swing": ("swing_worst", "DESC"),
    "cap_high": ("c_mean", "DESC"),
    "cap_low": ("c_mean", "ASC"),
    "recent": ("latest", "DESC NULLS LAST"),
}


def window(q: SearchQuery, part_path: str):
    """(v1, v2) expressions [V]: the query's window, or the part's reference window."""
    if q.own_window:
        return F(f"{part_path}__ref_bias_low_v"), F(f"{part_path}__ref_bias_high_v")
    return const(q.v1_v), const(q.v2_v)


def search_rows(q: SearchQuery):
    """Condition-matching lot summaries annotated with c1, c2 [F], swing and ``spans``."""
    rows = condition_rows(q)
    if q.own_window:
        rows = rows.filter(part__ref_bias_low_v__isnull=False, part__ref_bias_high_v__isnull=False)
    v1, v2 = window(q, "part")
    return rows.annotate(
        c1=as_float(lot_c(v1)),
        c2=as_float(lot_c(v2)),
        spans=ExpressionWrapper(spans(v1, v2), output_field=BooleanField()),
    ).annotate(swing=as_float(F("c1") / F("c2")))


@dataclass(frozen=True)
class Ranking:
    """Stage 1's answer: matching part ids best first, and what the window left out."""

    part_ids: list[int]
    beyond_rows: int  # lot summaries whose measured range the window exceeds
    beyond_parts: int


def rank_parts(q: SearchQuery) -> Ranking:
    """Rank every matching part in one grouped pass over the lot summaries.

    Groups are kept when the part passes or has lot summaries the window extrapolates, so
    the same pass also counts what extrapolation left out (it is never silent).
    """
    counted = Q() if q.include_extrapolated else Q(spans=True)
    c_at = "c1" if q.c_at == "v1" else "c2"
    # Only the aggregates this query filters or sorts on: PostgreSQL evaluates the junction
    # expression once per aggregate and row, so each one left out saves two POWER calls.
    wanted = {
        "n_units_sum": Sum("n_units", filter=counted),
        "n_beyond": Count("lot_id", filter=Q(spans=False)),
    }
    if q.min_swing is not None or q.sort == "swing":
        wanted["swing_worst"] = Min("swing", filter=counted)
    if q.c_min_f is not None:
        wanted["c_low"] = Min(c_at, filter=counted)
    if q.c_max_f is not None:
        wanted["c_high"] = Max(c_at, filter=counted)
    if q.sort in ("cap_high", "cap_low"):
        wanted["c_mean"] = Avg(c_at, filter=counted)
    if q.sort == "recent":
        wanted["latest"] = Max("received_on", filter=counted)
    groups = search_rows(q).values("part_id").annotate(**wanted)
    passes = Q(n_units_sum__gte=q.min_units)
    if q.min_swing is not None:
        passes &= Q(swing_worst__gte=q.min_swing)
    if q.c_min_f is not None:
        passes &= Q(c_low__gte=q.c_min_f)
    if q.c_max_f is not None:
        passes &= Q(c_high__lte=q.c_max_f)
    groups = groups.annotate(
        passes=Case(When(passes, then=Value(1)), default=Value(0), output_field=IntegerField())
    )
    key, direction = _ORDER[q.sort]
    inner, params = sql_of(groups.order_by().values_list("part_id", "passes", "n_beyond", key))
    # Only passing parts come back, in order; the window sums over every group first give
    # what extrapolation left out (one row is kept when nothing passes, for those sums).
    sql = (
        "SELECT w.part_id, w.passes, w.beyond_rows, w.beyond_parts FROM ("
        " SELECT g.*, SUM(g.n_beyond) OVER () AS beyond_rows,"
        " SUM(CASE WHEN g.n_beyond > 0 THEN 1 ELSE 0 END) OVER () AS beyond_parts,"
        " ROW_NUMBER() OVER () AS row_no"
        f" FROM ({inner}) g) w WHERE w.passes = 1 OR w.row_no = 1"
        f' ORDER BY w.passes DESC, w."{key}" {direction}, w.part_id'
    )
    rows = plain_rows_sql(groups.db, sql, params)
    ids = [pid for pid, ok, _, _ in rows if ok]
    beyond_rows, beyond_parts = (int(rows[0][2] or 0), int(rows[0][3] or 0)) if rows else (0, 0)
    return Ranking(ids, beyond_rows, beyond_parts)


def search_parts(q: SearchQuery) -> SearchPage:
    """Parts whose fitted swing over a bias window meets the query, ranked, one page.

    Parameters
    ----------
    q : SearchQuery
        Validated here; :class:`~labdb.search.errors.SearchInputError` names bad parameters.

    Returns
    -------
    SearchPage
    """
    q = q.validated()
    ranking = rank_parts(q)
    total = len(ranking.part_ids)
    n_pages = max(1, math.ceil(total / q.per_page))
    page = min(q.page, n_pages)
    page_ids = ranking.part_ids[(page - 1) * q.per_page : page * q.per_page]
    hits = _refine(q, page_ids)
    return SearchPage(
        query=q,
        hits=tuple(hits),
        total=total,
        page=page,
        n_pages=n_pages,
        warnings=tuple(_page_warnings(q, ranking)),
    )


def _page_warnings(q: SearchQuery, ranking: Ranking) -> list[str]:
    out = []
    where = "its reference window" if q.own_window else f"{q.v1_v:g}–{q.v2_v:g} V"
    n, parts = ranking.beyond_rows, ranking.beyond_parts
    if n and not q.include_extrapolated:
        out.append(
            f"{summaries(n)} of {parts} part(s) were left out: the window ({where}) reaches "
            "beyond the bias range those lots were measured over, so their swing would be "
            "extrapolated. Include extrapolated lots to see them, marked."
        )
    elif n:
        out.append(
            f"{summaries(n)} of {parts} part(s) are judged beyond their measured bias range "
            "(marked ‘extrapolated’): treat their figures as extrapolation."
        )
    if q.own_window:
        lacking = Part.objects.filter(archived=False).filter(
            Q(ref_bias_low_v__isnull=True) | Q(ref_bias_high_v__isnull=True)
        )
        if q.kind:
            lacking = lacking.filter(kind=q.kind)
        if q.text:
            lacking = lacking.filter(
                Q(part_number__icontains=q.text) | Q(description__icontains=q.text)
            )
        n = lacking.count()
        if n:
            out.append(
                f"{n} part(s) have no reference bias window and were not judged; give a "
                "window V1–V2 to include them."
            )
    unlinked = unlinked_summaries()
    if unlinked:
        out.append(
            f"{summaries(unlinked)} not yet linked to their part, so not searched; "
            "recomputing their lots fixes this."
        )
    return out


def _refine(q: SearchQuery, page_ids: list[int]) -> list[PartHit]:
    if not page_ids:
        return []
    parts = {p["id"]: p for p in Part.objects.filter(id__in=page_ids).values()}
    flags = dict(
        Flag.objects.filter(part_id__in=page_ids, state=FlagState.OPEN, active=True)
        .values("part_id")
        .annotate(n=Count("id"))
        .values_list("part_id", "n")
    )
    lots_by_part: dict[int, list[LotFigures]] = defaultdict(list)
    left_out: dict[int, int] = defaultdict(int)
    counted: list[dict] = []
    rows = list(
        condition_rows(q, page_ids)
        .order_by("received_on", "lot_id")
        .values(
            "lot_id",
            "lot__code",
            "part_id",
            "received_on",
            "temperature_c",
            "n_units",
            "cjo_med",
            "vj_med",
            "m_med",
            "cp_med",
            "bias_min_v",
            "bias_max_v",
            "unit_fits",
        )
    )
    for r, (v1, v2), (c1, c2) in zip(rows, *_median_units(q, parts, rows), strict=True):
        r["c1"], r["c2"], r["swing"] = c1, c2, c1 / c2
        r["spans"] = r["bias_min_v"] <= v1 + EDGE_SLACK_V and r["bias_max_v"] >= v2 - EDGE_SLACK_V
        if not r["spans"] and not q.include_extrapolated:
            left_out[r["part_id"]] += 1
            continue
        lots_by_part[r["part_id"]].append(_lot(r))
        counted.append(r)
    units = _unit_spread(q, parts, counted)
    # A part whose lots changed between the two queries (a recomputation committed in
    # between) has nothing left to show; it is skipped rather than shown half-empty.
    return [
        _hit(q, parts[pid], lots_by_part[pid], units[pid], flags.get(pid, 0), left_out[pid])
        for pid in page_ids
        if lots_by_part.get(pid)
    ]


def _median_units(q: SearchQuery, parts: dict, rows: list[dict]) -> tuple[list, list]:
    """Each lot's window [V] and its median unit's C there [F] (the physics formula, as the
    ranking pass evaluated it in the database), for one page of lots."""
    if not rows:
        return [], []
    windows = np.array([_window_of(q, parts[r["part_id"]]) for r in rows], dtype=float)
    params = np.array([(r["cjo_med"], r["vj_med"], r["m_med"], r["cp_med"]) for r in rows])
    return windows.tolist(), junction_capacitance_many(windows, *params.T).tolist()


def _lot(r: dict) -> LotFigures:
    return LotFigures(
        lot_id=r["lot_id"],
        code=r["lot__code"],
        received_on=r["received_on"],
        temperature_c=r["temperature_c"],
        n_units=r["n_units"],
        params={"cjo": r["cjo_med"], "vj": r["vj_med"], "m": r["m_med"], "cp": r["cp_med"]},
        c1_f=r["c1"],
        c2_f=r["c2"],
        swing=r["swing"],
        bias_min_v=r["bias_min_v"],
        bias_max_v=r["bias_max_v"],
        extrapolated=not r["spans"],
    )


def _unit_spread(q: SearchQuery, parts: dict, rows: list[dict]):
    """Per part: units meeting the minimum swing, and the worst unit, from the unit fits the
    counted lots' summaries hold (each unit's most recent fit)."""
    lot_ids, labels, c1, c2 = unit_capacitances(
        (r["lot_id"], r["unit_fits"], _window_of(q, parts[r["part_id"]])) for r in rows
    )
    swing = c1 / c2
    part_of = {r["lot_id"]: r["part_id"] for r in rows}
    code_of = {r["lot_id"]: r["lot__code"] for r in rows}
    owner = np.array([part_of[lot] for lot in lot_ids], dtype=np.int64)
    out = {}
    for pid in set(part_of.values()):
        (mine,) = np.nonzero(owner == pid)
        if mine.size == 0:
            out[pid] = UnitSpread(
                n_units=0, n_meeting=None if q.min_swing is None else 0, worst="—", worst_swing=None
            )
            continue
        k = int(mine[np.argmin(swing[mine])])
        out[pid] = UnitSpread(
            n_units=int(mine.size),
            n_meeting=None if q.min_swing is None else int((swing[mine] >= q.min_swing).sum()),
            worst=f"lot {code_of[lot_ids[k]]} unit {labels[k]}",
            worst_swing=float(swing[k]),
        )
    return out


def _window_of(q: SearchQuery, part: dict) -> tuple[float, float]:
    """The bias window [V] a part is judged over: the query's, or the part's own."""
    if q.own_window:
        return part["ref_bias_low_v"], part["ref_bias_high_v"]
    return q.v1_v, q.v2_v


def _hit(q, part: dict, lots: list[LotFigures], units: UnitSpread, flags: int, left: int):
    worst = min(lots, key=lambda lot: lot.swing)
    dated = [lot.received_on for lot in lots if lot.received_on is not None]
    v1, v2 = _window_of(q, part)
    warnings = []
    rated = part["rated_reverse_v"]
    if rated is not None and v2 > rated:
        warnings.append(
            f"the window reaches {v2:g} V, beyond this part's rated {rated:g} V reverse"
        )
    if left:
        warnings.append(f"{left} lot(s) left out: measured over a narrower bias range")
    if any(lot.extrapolated for lot in lots):
        warnings.append("some lots are extrapolated beyond their measured bias range")
    return PartHit(
        part_id=part["id"],
        part_number=part["part_number"],
        kind=part["kind"],
        description=part["description"],
        rated_reverse_v=rated,
        v1_v=v1,
        v2_v=v2,
        swing_median=statistics.median(lot.swing for lot in lots),
        swing_worst=worst.swing,
        worst_lot=worst.code,
        c1_f=statistics.median(lot.c1_f for lot in lots),
        c2_f=statistics.median(lot.c2_f for lot in lots),
        n_lots=len({lot.lot_id for lot in lots}),
        n_units=sum(lot.n_units for lot in lots),
        open_flags=flags,
        latest_received=max(dated, default=None),
        lots=tuple(lots),
        units=units,
        n_left_out=left,
        warnings=tuple(warnings),
    )
