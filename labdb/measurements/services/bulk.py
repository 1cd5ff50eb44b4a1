"""Bulk import: many files from a bench PC, parsed one by one, fitted together, stored in chunks.

Every file is still all-or-nothing (a savepoint each, its raw file removed if it fails);
what the bulk path saves is per-file overhead: the sweeps of a chunk are fitted by the
vectorised batch fitter, catalogue lookups are asked once, and a chunk commits once.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass

from django.core.files.storage import default_storage
from django.db import transaction

from labdb.ingest.impedance import is_impedance_file
from labdb.ingest.touchstone import port_count
from labdb.measurements.errors import Rejected
from labdb.measurements.models import Sweep
from labdb.measurements.services.fits import MODEL_CHOICES
from labdb.measurements.services.record import (
    ARCHIVE_SUFFIXES,
    Outcome,
    SweepContext,
    _label,
    _parse,
    _prepare,
    _Prepared,
    _store,
    fit_prepared_points,
    record_file,
    store_atomically,
)
from labdb.physics import PhysicsInputError, fit_junction_batch
from labdb.quality.hooks import lots_changed

CHUNK = 200


@dataclass
class _Pending:
    data: bytes
    name: str
    sources: list[str]
    prepared: list[_Prepared]


def _fit_chunk(pending: list[_Pending]) -> list[Outcome]:
    """Batch-fit every prepared sweep; returns rejections for files that cannot be fitted."""
    rejected: list[Outcome] = []
    by_model: dict[str, list[_Prepared]] = {}
    for item in pending:
        for prep in item.prepared:
            by_model.setdefault(prep.model, []).append(prep)
    for model, preps in by_model.items():
        if model not in MODEL_CHOICES:
            continue  # fit_prepared_points below names the bad model
        try:
            results = fit_junction_batch(
                [p.points["bias_v"] for p in preps],
                [p.points["capacitance_f"] for p in preps],
                model=model,
            )
        except PhysicsInputError:
            continue  # one unfittable sweep refuses the batch: fit each alone to name it
        for prep, result in zip(preps, results, strict=True):
            prep.result = result
    for item in list(pending):
        try:
            for prep in item.prepared:
                if prep.result is None:
                    prep.result = fit_prepared_points(prep.points, prep.model, item.name)
        except Rejected as exc:
            pending.remove(item)
            rejected += [Outcome(src, "rejected", problems=exc.problems) for src in item.sources]
    return rejected


def _store_chunk(pending: list[_Pending], user, origin: str) -> list[Outcome]:
    from labdb.measurements.services.bulk_insert import insert_chunk

    fast = insert_chunk(pending, user, origin)
    if fast is not None:
        return fast
    outcomes: list[Outcome] = []
    try:
        with transaction.atomic():
            for item in pending:
                outcomes += store_atomically(
                    item.sources,
                    item.name,
                    lambda written, item=item: [
                        _store(p, item.data, item.name, user, origin, written)
                        for p in item.prepared
                    ],
                )
    except BaseException:
        # The chunk's commit failed after its savepoints succeeded: remove what they wrote.
        for o in outcomes:
            if o.status == "stored" and o.sweep is not None:
                path = o.sweep.raw_file.name
                if not Sweep.objects.filter(raw_file=path).exists():
                    default_storage.delete(path)
        raise
    return outcomes


def import_files(
    items: Iterable[tuple[bytes, str, SweepContext]],
    *,
    user=None,
    origin: str = "command",
    recompute: bool = True,
    progress: Callable[[int], None] | None = None,
    chunk: int = CHUNK,
) -> list[Outcome]:
    """Record many files; the same outcomes as calling ``record_file`` on each in turn."""
    outcomes: list[Outcome] = []
    pending: list[_Pending] = []
    cache: dict = {}
    done = 0

    def flush() -> None:
        nonlocal pending
        if pending:
            outcomes.extend(_fit_chunk(pending))
            outcomes.extend(_store_chunk(pending, user, origin))
            pending = []

    for data, name, ctx in items:
        done += 1
        if name.lower().endswith(ARCHIVE_SUFFIXES) or port_count(name) is not None:
            flush()
            outcomes += record_file(data, name, ctx, user=user, origin=origin, recompute=False)
        else:
            try:
                sweeps = _parse(data, name)
            except Rejected as exc:
                sweeps = []
                # An impedance table is no bias sweep, so the bias-sweep parser refuses it;
                # only then is it worth sniffing (most bench files parse at the first try).
                if is_impedance_file(data, name):
                    flush()
                    outcomes += record_file(
                        data, name, ctx, user=user, origin=origin, recompute=False
                    )
                else:
                    outcomes.append(Outcome(name, "rejected", problems=exc.problems))
            sources = [_label(name, s) for s in sweeps]
            try:
                prepared = [_prepare(s, ctx, name, fit=False, cache=cache) for s in sweeps]
            except Rejected as exc:
                outcomes += [Outcome(src, "rejected", problems=exc.problems) for src in sources]
                prepared = []
            if prepared:
                pending.append(_Pending(data, name, sources, prepared))
                if len(pending) >= chunk:
                    flush()
                    cache.clear()  # a long import sees catalogue edits made meanwhile
        if progress is not None:
            progress(done)
    flush()
    if recompute:
        lots = {o.sweep.unit.lot_id for o in outcomes if o.status == "stored" and o.sweep}
        lots_changed(lots)
    return outcomes
