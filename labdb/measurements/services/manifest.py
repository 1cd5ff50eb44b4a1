"""Turn an archive's manifest row into the context that overrides a member's metadata."""

from __future__ import annotations

from dataclasses import replace

from labdb.measurements.errors import Problem, Rejected
from labdb.measurements.services.record import SweepContext

_TEXT = ("part", "lot", "unit", "fixture", "kind", "operator", "illumination")


def context_for_member(ctx: SweepContext, row: dict | None) -> SweepContext:
    """``ctx`` with the manifest row's non-empty values laid over it (row wins)."""
    if not row:
        return ctx
    changes: dict = {}
    for key in _TEXT:
        value = row.get(key)
        if value not in (None, ""):
            changes[key] = str(value).strip()
    if row.get("temperature_c") not in (None, ""):
        try:
            changes["temperature_c"] = float(row["temperature_c"])
        except (TypeError, ValueError):
            raise Rejected(
                Problem(f"manifest temperature_c {row['temperature_c']!r} is not a number")
            ) from None
    if row.get("measured_at") not in (None, ""):
        changes["measured_at"] = row["measured_at"]
    return replace(ctx, **changes)
