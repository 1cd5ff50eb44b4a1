"""The one place the measurements layer tells quality that lots' current fits changed."""

from __future__ import annotations

from collections.abc import Iterable


def lots_changed(lot_ids: Iterable[int]) -> None:
    """Recompute the summaries and flags of these lots (after the surrounding commit)."""
    ids = sorted(set(lot_ids))
    if not ids:
        return
    from labdb.quality import services

    recompute = getattr(services, "recompute_lots", None)
    if recompute is not None:
        recompute(ids)
