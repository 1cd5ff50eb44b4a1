"""Flag rows from rule proposals (one per subject, rule, figure, condition) and their review."""

from __future__ import annotations

import math
from collections.abc import Iterable

import numpy as np
from django.db import transaction
from django.utils import timezone

from labdb.quality.errors import ReviewRefused
from labdb.quality.models import Flag, FlagState
from labdb.quality.services.rules import MATERIAL_FRACTION, Proposal

_UPDATED_FIELDS = ["lot", "summary", "evidence", "active", "state", "updated_at"]


def json_safe(obj):
    """Evidence as plain JSON: numpy scalars to Python, NaN/±inf to None, tuples to lists."""
    if isinstance(obj, dict):
        return {str(k): json_safe(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple | np.ndarray):
        return [json_safe(v) for v in obj]
    if isinstance(obj, bool | np.bool_):
        return bool(obj)
    if isinstance(obj, int | np.integer):
        return int(obj)
    if isinstance(obj, float | np.floating):
        return float(obj) if math.isfinite(obj) else None
    return obj


def flag_key(flag: Flag) -> tuple:
    """The identity a proposal and a stored flag share (see ``Proposal.key``)."""
    lot = flag.lot_id if flag.unit_id is None else None
    return (flag.unit_id, lot, flag.rule, flag.figure, flag.condition)


def is_material(reviewed: dict | None, value: float | None, limit: float | None) -> bool:
    """Has a finding moved enough since its review to ask for a new one?

    Material means the figure moved by more than :data:`MATERIAL_FRACTION` (25 %) of the
    distance between its reviewed value and the rule's limit at review time, in either
    direction; a value that appears or disappears (None) is material too.
    """
    if reviewed is None:
        return False
    before, lim = reviewed.get("value"), reviewed.get("limit")
    if before is None or value is None:
        return (before is None) != (value is None)
    if lim is None:
        return value != before
    distance = abs(before - lim)
    return abs(value - before) > MATERIAL_FRACTION * distance


def sync_flags(part, proposals: Iterable[Proposal]) -> dict:
    """Make the part's flag rows match the findings on current data.

    New findings insert open flags; findings already flagged update their evidence and
    summary (keeping the review); flags whose rule no longer fires become inactive and keep
    their review; an acknowledged flag whose figure moved materially (:func:`is_material`)
    reopens. Nothing is written for flags that did not change, so running twice writes once.

    Returns
    -------
    dict
        Counts: ``created``, ``updated``, ``deactivated``, ``reopened``.
    """
    now = timezone.now()
    existing = {flag_key(f): f for f in Flag.objects.select_for_update().filter(part=part)}
    counts = {"created": 0, "updated": 0, "deactivated": 0, "reopened": 0}
    new, changed, seen = [], [], set()
    for p in proposals:
        if p.key in seen:
            continue
        seen.add(p.key)
        evidence = json_safe(dict(p.evidence, measure={"value": p.value, "limit": p.limit}))
        flag = existing.get(p.key)
        if flag is None:
            new.append(
                Flag(
                    part_id=p.part_id,
                    lot_id=p.lot_id,
                    unit_id=p.unit_id,
                    rule=p.rule,
                    figure=p.figure,
                    condition=p.condition,
                    summary=p.summary,
                    evidence=evidence,
                )
            )
            continue
        for kept in ("reviewed", "reopened"):
            if kept in flag.evidence:
                evidence[kept] = flag.evidence[kept]
        measure = evidence["measure"]
        state = flag.state
        if state == FlagState.ACKNOWLEDGED and is_material(
            flag.evidence.get("reviewed"), measure["value"], measure["limit"]
        ):
            state = FlagState.OPEN
            evidence["reopened"] = {"at": now.isoformat(), "was": flag.evidence.get("reviewed")}
            counts["reopened"] += 1
        if (flag.evidence, flag.summary, flag.active, flag.state, flag.lot_id) != (
            evidence,
            p.summary,
            True,
            state,
            p.lot_id,
        ):
            flag.evidence, flag.summary, flag.active, flag.state = evidence, p.summary, True, state
            flag.lot_id, flag.updated_at = p.lot_id, now
            changed.append(flag)
            counts["updated"] += 1
    for key, flag in existing.items():
        if key not in seen and flag.active:
            flag.active, flag.updated_at = False, now
            changed.append(flag)
            counts["deactivated"] += 1
    if new:
        Flag.objects.bulk_create(new)
        counts["created"] = len(new)
    if changed:
        Flag.objects.bulk_update(changed, _UPDATED_FIELDS)
    return counts


def review_flag(flag: Flag, state: str, user, note: str = "") -> Flag:
    """Record a curator's review of a flag: acknowledge (note required), dismiss, or reopen.

    Parameters
    ----------
    flag : Flag
        The flag; it is re-read under a row lock.
    state : {"acknowledged", "dismissed", "open"}
        The new review state.
    user : User
        Who reviews (recorded with the time).
    note : str
        Why; required to acknowledge, optional otherwise.

    Returns
    -------
    Flag
        The updated flag.

    Raises
    ------
    ReviewRefused
        Unknown state, no user, or an acknowledgement without a note.
    """
    if state not in FlagState.values:
        raise ReviewRefused(
            f"{state!r} is not a review state; use one of {FlagState.values}", "state"
        )
    if user is None or not getattr(user, "is_authenticated", False):
        raise ReviewRefused("a review is recorded with the reviewer; log in first", "user")
    note = (note or "").strip()
    if state == FlagState.ACKNOWLEDGED and not note:
        raise ReviewRefused(
            "acknowledging a flag needs a note saying why the finding is accepted", "note"
        )
    with transaction.atomic():
        locked = Flag.objects.select_for_update().get(pk=flag.pk)
        now = timezone.now()
        evidence = dict(locked.evidence)
        measure = evidence.get("measure", {})
        evidence["reviewed"] = {
            "value": measure.get("value"),
            "limit": measure.get("limit"),
            "state": state,
            "at": now.isoformat(),
        }
        locked.state, locked.evidence = state, evidence
        if note or state != FlagState.OPEN:
            locked.note = note
        locked.reviewed_by, locked.reviewed_at, locked.updated_at = user, now, now
        locked.save(
            update_fields=["state", "note", "evidence", "reviewed_by", "reviewed_at", "updated_at"]
        )
    return locked
