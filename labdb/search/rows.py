"""Lot-summary rows a query counts, and the unit fits behind them, as querysets.

One row is a lot summary (lot × illumination × temperature band). The part filters,
measurement conditions and lot choice narrow the rows; the bias window decides which rows
extrapolate (the window reaches beyond the lot's common measured bias range).
"""

from __future__ import annotations

import datetime as dt

import numpy as np
from django.db import connections
from django.db.models import Exists, F, OuterRef, Q, QuerySet, Value
from django.db.models.functions import Coalesce

from labdb.catalog.models import Part
from labdb.physics import junction_capacitance_many
from labdb.quality.models import Flag, FlagState, LotSummary
from labdb.search.expressions import const
from labdb.search.queries import PartFilter

#: Slack when comparing a window end with a measured range end [V]: far below any bench
#: supply's resolution, so a window equal to the measured range never counts as extrapolating.
EDGE_SLACK_V = 1e-6
_EARLIEST = dt.date(1, 1, 1)


def open_flags(part_ref: str = "part") -> QuerySet:
    """Open flags that still fire, correlated with the row's part."""
    return Flag.objects.filter(part=OuterRef(part_ref), state=FlagState.OPEN, active=True)


def condition_rows(q: PartFilter, part_ids: list[int] | None = None) -> QuerySet:
    """Lot summaries matching the part filters, conditions and lot choice (no window yet).

    Works on the summary's own copies of the lot's part and receipt date, so the lots table
    is never joined here; summaries not yet linked to their part are not searched (see
    :func:`unlinked_summaries`). ``part_ids``: only these parts, already chosen by the part
    filters (a page of results), so those filters are not applied again.
    """
    rows = LotSummary.objects.filter(
        illumination=q.illumination,
        temperature_c__gte=q.temp_min_c,
        temperature_c__lte=q.temp_max_c,
        part__isnull=False,
    )
    if part_ids is not None:
        return _lot_choice(rows.filter(part_id__in=part_ids), q)
    # Part filters as subqueries on the summary's part id, not a join: archived parts are
    # few, so "not among them" is a small hashed lookup per row where a join would hash
    # every part first (a third of the ranking pass at ten thousand parts).
    rows = rows.exclude(part_id__in=Part.objects.filter(archived=True).values("pk"))
    wanted = Q()
    if q.kind:
        wanted &= Q(kind=q.kind)
    if q.text:
        wanted &= Q(part_number__icontains=q.text) | Q(description__icontains=q.text)
    if wanted:
        rows = rows.filter(part_id__in=Part.objects.filter(wanted).values("pk"))
    if q.exclude_flagged:
        rows = rows.filter(~Exists(open_flags()))
    return _lot_choice(rows, q)


def _lot_choice(rows: QuerySet, q: PartFilter) -> QuerySet:
    """Keep the lots the query counts: every lot, the latest, or those received since."""
    if q.lots == "since":
        rows = rows.filter(received_on__gte=q.since)
    elif q.lots == "latest":
        # The newest lot over a temperature range is the newest of its own band, so only
        # rows marked newest in their band compete (a tenth of the rows, on their own index).
        rows = (
            rows.filter(newest_in_condition=True)
            .annotate(received=_received())
            .filter(~Exists(_later_rows(q)))
        )
    return rows


def sql_of(qs: QuerySet) -> tuple[str, tuple]:
    """The SQL and parameters a queryset would run (to be wrapped in a larger statement)."""
    return qs.query.get_compiler(using=qs.db).as_sql()


def plain_rows_sql(alias: str, sql: str, params) -> list[tuple]:
    """Rows of plain numbers straight from the cursor.

    The ranking pass returns thousands of (id, number, ...) rows that need no conversion;
    skipping Django's per-row handling saves a tenth of a search.
    """
    with connections[alias].cursor() as cursor:
        cursor.execute(sql, params)
        return cursor.fetchall()


def summaries(n: int) -> str:
    """'1 lot summary', '3 lot summaries' (one per lot and condition band)."""
    return f"{n} lot summary" if n == 1 else f"{n} lot summaries"


def unlinked_summaries() -> int:
    """How many lot summaries lack the copy of their lot's part (search cannot see them)."""
    return LotSummary.objects.filter(part__isnull=True).count()


def _received():
    # A lot without a receipt date sorts before every dated lot of its part.
    return Coalesce(F("received_on"), Value(_EARLIEST))


def _later_rows(q: PartFilter) -> QuerySet:
    """Summaries under the same conditions of a later lot of the same part.

    Only rows marked newest in their band count: if any later row exists in the range, the
    newest row of its band is later still, and marked.

    "Later" orders lots by receipt date, then by id (the later-registered lot wins a tie).
    PostgreSQL plans the NOT EXISTS as a hash anti-join on the part.
    """
    return (
        LotSummary.objects.filter(
            part_id=OuterRef("part_id"),
            illumination=q.illumination,
            temperature_c__gte=q.temp_min_c,
            temperature_c__lte=q.temp_max_c,
            newest_in_condition=True,
        )
        .annotate(received=_received())
        .filter(
            Q(received__gt=OuterRef("received"))
            | Q(received=OuterRef("received"), lot_id__gt=OuterRef("lot_id"))
        )
        .values("pk")
    )


def spans(v_low, v_high) -> Q:
    """Rows whose measured range covers the window [v_low, v_high] (expressions, V)."""
    return Q(bias_min_v__lte=v_low + const(EDGE_SLACK_V)) & Q(
        bias_max_v__gte=v_high - const(EDGE_SLACK_V)
    )


def unit_capacitances(lots) -> tuple[list[int], list[str], np.ndarray, np.ndarray]:
    """Each unit's capacitance at two biases, from the lot summaries' unit fits.

    Parameters
    ----------
    lots : iterable of (lot id, unit_fits, (bias_a, bias_b))
        ``unit_fits`` as a summary stores it ([unit id, label, CJO, VJ, M, CP] per unit, each
        unit's most recent fit under the summary's conditions); biases [V], reverse positive.

    Returns
    -------
    lot_ids, labels : list, length n
        Each unit's lot and label.
    c_a, c_b : ndarray, shape (n,)
        Capacitance [F] at bias_a and bias_b, from the physics core's formula, evaluated for
        every unit in one array operation.
    """
    flat = [(lot_id, u, window) for lot_id, fits, window in lots for u in fits]
    if not flat:
        empty = np.empty(0)
        return [], [], empty, empty
    params = np.array([u[2:6] for _, u, _ in flat], dtype=float)
    bias = np.array([w for _, _, w in flat], dtype=float)
    c = junction_capacitance_many(bias, *params.T)
    return [f[0] for f in flat], [f[1][1] for f in flat], c[:, 0], c[:, 1]
