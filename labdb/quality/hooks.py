"""The one place the measurements layer tells quality that lots' current fits changed."""

from __future__ import annotations

import logging
from collections.abc import Iterable

log = logging.getLogger(__name__)


def lots_changed(lot_ids: Iterable[int]) -> None:
    """Recompute the summaries and flags of these lots (callers run it after their commit).

    A failure here is logged, not raised: the sweeps are already stored, and a curator can
    rerun ``manage.py recompute_quality`` once the cause is fixed.
    """
    ids = sorted(set(lot_ids))
    if not ids:
        return
    from labdb.jobs.services import broker_configured, submit_lot_recompute

    if broker_configured():
        # A worker recomputes after the caller's commit; the caller does not wait for it.
        submit_lot_recompute(ids)
        return
    # Imported here: quality.services imports measurements, which imports this module.
    from labdb.quality.services import recompute_lots

    try:
        recompute_lots(ids)
    except Exception:
        log.exception("quality recomputation failed for lots %s; run recompute_quality", ids)
