"""Lot-summary rows a query counts, and the unit fits behind them, as querysets.

One row is a lot summary (lot × illumination × temperature band). The part filters,
measurement conditions and lot choice narrow the rows; the bias window decides which rows
extrapolate (the window reaches beyond the lot's common measured bias range).
"""

from __future__ import annotations

import datetime as dt

from django.db.models import Exists, F, OuterRef, Q, QuerySet, Value
from django.db.models.functions import Coalesce

from labdb.measurements.models import Sweep
from labdb.quality.models import Flag, FlagState, LotSummary
from labdb.search.expressions import const
from labdb.search.queries import PartFilter

#: Slack when comparing a window end with a measured range end [V]: far below any bench
#: supply's resolution, so a window equal to the measured range never counts as extrapolating.
EDGE_SLACK_V = 1e-6
_EARLIEST = dt.date(1, 1, 1)
_OLDEST = dt.datetime.min


def open_flags(part_ref: str = "part") -> QuerySet:
    """Open flags that still fire, correlated with the row's part."""
    return Flag.objects.filter(part=OuterRef(part_ref), state=FlagState.OPEN, active=True)


def condition_rows(q: PartFilter) -> QuerySet:
    """Lot summaries matching the part filters, conditions and lot choice (no window yet).

    Works on the summary's own copies of the lot's part and receipt date, so the lots table
    is never joined here; summaries not yet linked to their part are not searched (see
    :func:`unlinked_summaries`).
    """
    rows = LotSummary.objects.filter(
        illumination=q.illumination,
        temperature_c__gte=q.temp_min_c,
        temperature_c__lte=q.temp_max_c,
        part__archived=False,
    )
    if q.kind:
        rows = rows.filter(part__kind=q.kind)
    if q.text:
        rows = rows.filter(
            Q(part__part_number__icontains=q.text) | Q(part__description__icontains=q.text)
        )
    if q.exclude_flagged:
        rows = rows.filter(~Exists(open_flags()))
    if q.lots == "since":
        rows = rows.filter(received_on__gte=q.since)
    elif q.lots == "latest":
        rows = rows.annotate(received=_received()).filter(~Exists(_later_rows(q)))
    return rows


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

    "Later" orders lots by receipt date, then by id (the later-registered lot wins a tie).
    PostgreSQL plans the NOT EXISTS as a hash anti-join on the part.
    """
    return (
        LotSummary.objects.filter(
            part_id=OuterRef("part_id"),
            illumination=q.illumination,
            temperature_c__gte=q.temp_min_c,
            temperature_c__lte=q.temp_max_c,
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


def unit_fit_rows(lot_ids, q: PartFilter) -> QuerySet:
    """Current unit fits of the given lots under the query's conditions, one row per sweep."""
    return Sweep.objects.filter(
        unit__lot_id__in=list(lot_ids),
        unit__archived=False,
        archived=False,
        illumination=q.illumination,
        temperature_c__gte=q.temp_min_c,
        temperature_c__lte=q.temp_max_c,
        current_fit__isnull=False,
    )


def newest_per_unit(rows) -> list[tuple]:
    """Keep each unit's most recent sweep.

    ``rows`` are tuples starting (sweep id, unit id, measured_at, ...); a sweep without a
    measurement time counts as older than any with one, and the later id wins a tie.
    """
    best: dict[int, tuple] = {}
    keys: dict[int, tuple] = {}
    for r in rows:
        key = (r[2] is not None, r[2] or _OLDEST, r[0])
        if r[1] not in keys or key > keys[r[1]]:
            best[r[1]], keys[r[1]] = r, key
    return list(best.values())
