"""Which lot summary is its part's newest under each condition set (for search's "latest lot").

A lot is newer than another of the same part when it was received later; a lot without a
receipt date is older than every dated lot, and between equal dates the lot registered
later (higher id) is newer — the order :mod:`labdb.search.rows` applies.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable

from labdb.quality.models import LotSummary

_UNDATED = dt.date(1, 1, 1)


def newest_rows(rows: Iterable[tuple]) -> set[int]:
    """Ids of the newest rows per (part, illumination, temperature band).

    Parameters
    ----------
    rows : iterable of (id, part_id, lot_id, illumination, temperature_c, received_on)

    Returns
    -------
    set of int
    """
    best: dict[tuple, tuple] = {}
    for pk, part_id, lot_id, illumination, temperature_c, received in rows:
        key = (part_id, illumination, temperature_c)
        rank = (received or _UNDATED, lot_id)
        if key not in best or rank > best[key][0]:
            best[key] = (rank, pk)
    return {pk for _, pk in best.values()}


def refresh_part_copies(part_ids: Iterable[int]) -> int:
    """Bring the summaries' copies of their lot's part and receipt date, and the newest mark,
    up to date for these parts; returns how many rows changed.

    Called at the end of every recomputation (inside its transaction), and by code that
    writes summaries directly (benchmark and test catalogues).
    """
    ids = sorted(set(part_ids))
    if not ids:
        return 0
    rows = list(
        LotSummary.objects.filter(lot__part_id__in=ids).values_list(
            "pk",
            "lot__part_id",
            "lot_id",
            "illumination",
            "temperature_c",
            "lot__received_on",
            "part_id",
            "received_on",
            "newest_in_condition",
        )
    )
    newest = newest_rows(r[:6] for r in rows)
    changed = 0
    stale = [r for r in rows if r[6] != r[1] or r[7] != r[5]]
    for r in stale:
        LotSummary.objects.filter(pk=r[0]).update(part_id=r[1], received_on=r[5])
    changed += len(stale)
    mark = [r[0] for r in rows if r[0] in newest and not r[8]]
    unmark = [r[0] for r in rows if r[0] not in newest and r[8]]
    if mark:
        changed += LotSummary.objects.filter(pk__in=mark).update(newest_in_condition=True)
    if unmark:
        changed += LotSummary.objects.filter(pk__in=unmark).update(newest_in_condition=False)
    return changed
