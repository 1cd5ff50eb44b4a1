"""The lot model: a junction fit to a lot's pointwise median curve, as a versioned Fit."""

from __future__ import annotations

import numpy as np

from labdb.audit.services import record_created_many
from labdb.measurements.errors import Rejected
from labdb.measurements.models import Fit, FitOrigin
from labdb.measurements.services.fits import build_fit, input_hash, points_hash, run_fit
from labdb.physics import PhysicsInputError, fit_junction_batch
from labdb.physics.fitting import MIN_SPAN_V

#: The lot model is chosen like a unit's: junction+cp only when AICc says so.
LOT_MODEL_CHOICE = "auto"


def fit_lot_models(summaries: list) -> tuple[int, list[str]]:
    """Write a new lot-model fit version for each summary whose median curve changed.

    The inputs of a lot model are its grid and median curve (``band["bias_v"]``,
    ``band["p50"]``); their hash, the model choice and the fitter version decide, as for
    unit fits, whether a new version is due, so recomputing unchanged lots writes nothing.

    Parameters
    ----------
    summaries : list of LotSummary
        Saved summaries (with ids) whose figures were just recomputed.

    Returns
    -------
    written : int
        New fit versions.
    failures : list of str
        Lots whose median curve could not be fitted, with the reason.
    """
    todo = []
    for s in summaries:
        band = s.band or {}
        grid = np.asarray(band.get("bias_v", []), dtype=float)
        if grid.size < 5 or grid[-1] - grid[0] < MIN_SPAN_V:
            continue
        p50 = np.asarray(band["p50"], dtype=float)
        todo.append((s, grid, p50, input_hash(points_hash(grid, p50), LOT_MODEL_CHOICE)))
    if not todo:
        return 0, []
    latest = {}
    for sid, version, sha in (
        Fit.objects.filter(lot_summary__in=[t[0] for t in todo])
        .order_by("lot_summary_id", "-version")
        .values_list("lot_summary_id", "version", "input_sha256")
    ):
        latest.setdefault(sid, (version, sha))
    todo = [t for t in todo if latest.get(t[0].pk, (0, None))[1] != t[3]]
    results = _fit_all([t[1] for t in todo], [t[2] for t in todo])
    fits, failures = [], []
    for (s, _, _, sha), result in zip(todo, results, strict=True):
        if isinstance(result, str):
            failures.append(f"lot {s.lot_id} ({s.illumination}, {s.temperature_c:g} °C): {result}")
            continue
        version = latest.get(s.pk, (0, None))[0] + 1
        fits.append(
            build_fit(result, lot_summary=s, version=version, in_sha=sha, origin=FitOrigin.LOT)
        )
    # One INSERT for every version (and one for their audit events): a full recomputation
    # of a part writes hundreds, and row-by-row saves were a third of its time.
    Fit.objects.bulk_create(fits)
    record_created_many(fits)
    return len(fits), failures


def _fit_all(grids: list[np.ndarray], curves: list[np.ndarray]) -> list:
    """Fit every median curve; batch first, one by one when some curve is refused."""
    if not grids:
        return []
    try:
        return fit_junction_batch(grids, curves, model=LOT_MODEL_CHOICE)
    except PhysicsInputError:
        pass
    out = []
    for grid, curve in zip(grids, curves, strict=True):
        try:
            out.append(run_fit(grid, curve, LOT_MODEL_CHOICE))
        except Rejected as exc:
            out.append(str(exc))
    return out
