"""The bulk import's fast writer: one INSERT per table for a whole chunk of prepared files.

It stores exactly what recording the files one by one would (rows, raw files, notes, fit
version 1, audit events); it only asks the database fewer times. Anything unusual — a
database without returned ids, a constraint tripped by a concurrent writer — makes it give
the chunk back (return None) after undoing its work, and the caller records file by file.
"""

from __future__ import annotations

import hashlib
import logging

from django.db import IntegrityError, connection, transaction

from labdb.audit.services import record_created_many
from labdb.catalog.models import Lot, Unit
from labdb.measurements.errors import Rejected
from labdb.measurements.models import Fit, Sweep
from labdb.measurements.services.fits import build_fit, input_hash
from labdb.measurements.services.record import Outcome, _discard, build_sweep, save_raw

log = logging.getLogger(__name__)


def _lots(preps) -> tuple[dict, set, list]:
    parts = {p.part.pk: p.part for _, p in preps}
    keys = {(p.part.pk, p.lot_code) for _, p in preps}
    found = {
        (lot.part_id, lot.code): lot
        for lot in Lot.objects.filter(
            part_id__in={k[0] for k in keys}, code__in={k[1] for k in keys}
        ).select_related("part")
    }
    # Related objects are set, not just ids, so audit summaries (str of a row) ask nothing.
    new = [Lot(part=parts[part], code=code) for part, code in sorted(keys - found.keys())]
    Lot.objects.bulk_create(new)
    found.update({(lot.part_id, lot.code): lot for lot in new})
    return found, {(lot.part_id, lot.code) for lot in new}, new


def _units(preps, lots) -> tuple[dict, set, list]:
    by_pk = {lot.pk: lot for lot in lots.values()}
    keys = {(lots[(p.part.pk, p.lot_code)].pk, p.unit_label) for _, p in preps}
    found = {
        (u.lot_id, u.label): u
        for u in Unit.objects.filter(
            lot_id__in={k[0] for k in keys}, label__in={k[1] for k in keys}
        ).select_related("lot__part")
    }
    new = [Unit(lot=by_pk[lot], label=label) for lot, label in sorted(keys - found.keys())]
    Unit.objects.bulk_create(new)
    found.update({(u.lot_id, u.label): u for u in new})
    return found, {(u.lot_id, u.label) for u in new}, new


def _insert(pending, user, origin: str, written: list[str]) -> list[Outcome]:
    preps = [(item, p) for item in pending for p in item.prepared]
    lots, new_lot_keys, new_lots = _lots(preps)
    units, new_unit_keys, new_units = _units(preps, lots)
    shas = {id(item): hashlib.sha256(item.data).hexdigest() for item in pending}
    stored = {
        (s.unit_id, s.raw_sha256): s
        for s in Sweep.objects.filter(
            unit_id__in={u.pk for u in units.values()}, raw_sha256__in=set(shas.values())
        ).select_related("current_fit")
    }
    rows: list[tuple] = []  # (source, status, sweep key, prep, notes)
    new_sweeps: dict[tuple, tuple] = {}
    noted: set = set()
    for item, prep in preps:
        notes = list(prep.notes)
        lot_key = (prep.part.pk, prep.lot_code)
        lot = lots[lot_key]
        if lot_key in new_lot_keys and lot_key not in noted:
            notes.append(f"created lot {prep.lot_code} of {prep.part.part_number}")
            noted.add(lot_key)
        unit_key = (lot.pk, prep.unit_label)
        unit = units[unit_key]
        if unit_key in new_unit_keys and unit_key not in noted:
            notes.append(f"created unit {prep.unit_label} in lot {prep.lot_code}")
            noted.add(unit_key)
        key = (unit.pk, shas[id(item)])
        source = item.sources[item.prepared.index(prep)]
        if key in stored or key in new_sweeps:
            rows.append((source, "duplicate", key, prep, notes + ["this file is already stored"]))
            continue
        path = save_raw(key[1], item.data, item.name, written)
        sweep = build_sweep(prep, unit, key[1], path, item.data, item.name, user, notes)
        new_sweeps[key] = (sweep, prep)
        rows.append((source, "stored", key, prep, notes))
    sweeps = [s for s, _ in new_sweeps.values()]
    Sweep.objects.bulk_create(sweeps)
    fits = [
        build_fit(
            prep.result,
            sweep=sweep,
            version=1,
            in_sha=input_hash(sweep.points_sha256, prep.model),
            origin=origin,
            user=user,
        )
        for sweep, prep in new_sweeps.values()
    ]
    Fit.objects.bulk_create(fits)
    for sweep, fit in zip(sweeps, fits, strict=True):
        sweep.current_fit = fit
    Sweep.objects.bulk_update(sweeps, ["current_fit"], batch_size=500)
    record_created_many([*new_lots, *new_units, *sweeps, *fits], actor=user)
    out = []
    for source, status, key, _prep, notes in rows:
        sweep = stored.get(key) or new_sweeps[key][0]
        out.append(Outcome(source, status, sweep=sweep, fit=sweep.current_fit, notes=notes))
    return out


def insert_chunk(pending, user, origin: str) -> list[Outcome] | None:
    """Store a chunk with a handful of statements, or None (nothing kept) to fall back."""
    if not connection.features.can_return_rows_from_bulk_insert:
        return None
    written: list[str] = []
    try:
        with transaction.atomic():
            return _insert(pending, user, origin, written)
    except (IntegrityError, Rejected) as exc:
        log.info("bulk insert fell back to file-by-file recording: %s", exc)
        _discard(written)
        return None
    except BaseException:
        _discard(written)
        raise
