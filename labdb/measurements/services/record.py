"""Record sweeps: raw bytes kept, points converted, fit version 1 written — or nothing.

Each file is one transaction. A rejected file leaves no row and no file on disk.
"""

from __future__ import annotations

import hashlib
import json
import logging
from dataclasses import dataclass, field, fields, replace
from datetime import datetime

import numpy as np
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage
from django.db import IntegrityError, transaction
from django.utils import timezone

from labdb.catalog.models import Lot, Part, Unit
from labdb.ingest import ParsedSweep, ParseError, merge_metadata, parse_file, sweep_from_arrays
from labdb.ingest.impedance import is_impedance_file
from labdb.measurements.errors import Problem, Rejected
from labdb.measurements.models import Fit, Fixture, FixtureKind, Illumination, Sweep
from labdb.measurements.services.calibration import as_physics, calibration_in_force
from labdb.measurements.services.fits import fit_sweep, points_hash, run_fit
from labdb.physics import PhysicsInputError, capacitance_from_frequency
from labdb.quality.hooks import lots_changed

log = logging.getLogger(__name__)

ARCHIVE_SUFFIXES = (".zip",)


@dataclass
class SweepContext:
    """What the caller states beyond the file (form, manifest row or API fields).

    These values win over the file's own ``# key: value`` lines; disagreements are noted.
    """

    part: str | None = None
    lot: str | None = None
    unit: str | None = None
    fixture: str | None = None
    kind: str | None = None
    temperature_c: float | None = None
    illumination: str | None = None
    measured_at: datetime | None = None
    operator: str | None = None
    test_frequency_hz: float | None = None
    test_level_v: float | None = None
    model: str = "auto"
    bias_v: float | None = None  # reverse bias of an impedance sweep [V]

    def as_meta(self) -> dict:
        skip = {"model", "bias_v"}
        return {
            f.name: getattr(self, f.name)
            for f in fields(self)
            if f.name not in skip and getattr(self, f.name) not in (None, "")
        }


@dataclass
class Outcome:
    """What happened to one sweep of an upload."""

    source: str
    status: str  # "stored" | "duplicate" | "rejected" | "preview"
    sweep: Sweep | None = None
    fit: Fit | None = None
    notes: list[str] = field(default_factory=list)
    problems: list[Problem] = field(default_factory=list)
    parsed: ParsedSweep | None = None
    fit_result: object | None = None
    capacitance_f: list[float] | None = None

    @property
    def ok(self) -> bool:
        return self.status != "rejected"


@dataclass
class _Prepared:
    """A parsed sweep resolved against the catalogue and converted, ready to store."""

    parsed: ParsedSweep
    meta: dict
    part: Part
    lot_code: str
    unit_label: str
    fixture: Fixture
    points: dict
    calibration: object | None
    result: object
    notes: list[str]
    model: str = "auto"


def _sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _required(meta: dict, key: str, source: str) -> str:
    value = meta.get(key)
    if value in (None, ""):
        raise Rejected(
            Problem(
                f"no {key} given: choose it on the form or add a line '# {key}: …' to the file",
                file=source,
                field=key,
            )
        )
    return str(value).strip()


def _lookup(cache: dict | None, model, field: str, value: str):
    """One catalogue row by a unique field; a bulk import passes ``cache`` to ask once."""
    if cache is None:
        return model.objects.filter(**{field: value}).first()
    key = (model.__name__, value)
    if key not in cache:
        cache[key] = model.objects.filter(**{field: value}).first()
    return cache[key]


def resolve_subject(
    meta: dict, source: str, cache: dict | None = None
) -> tuple[Part, str, str, Fixture]:
    """Part, lot code, unit label and fixture named by merged metadata (Rejected if unknown)."""
    part_no = _required(meta, "part", source)
    part = _lookup(cache, Part, "part_number", part_no)
    if part is None:
        raise Rejected(
            Problem(
                f"part '{part_no}' is not in the catalogue; add it first", file=source, field="part"
            )
        )
    lot_code = _required(meta, "lot", source)
    unit_label = _required(meta, "unit", source)
    fixture_name = _required(meta, "fixture", source)
    fixture = _lookup(cache, Fixture, "name", fixture_name)
    if fixture is None:
        raise Rejected(
            Problem(
                f"fixture '{fixture_name}' is not known; add it first", file=source, field="fixture"
            )
        )
    return part, lot_code, unit_label, fixture


def _prepare(
    parsed: ParsedSweep,
    ctx: SweepContext,
    source: str,
    *,
    fit: bool = True,
    cache: dict | None = None,
) -> _Prepared:
    """Resolve, check and convert one parsed sweep; fit it unless a batch fit follows."""
    outer = ctx.as_meta()
    if parsed.unit_label:
        outer.pop("unit", None)  # a wide file names its units in the column headers
    meta, conflicts = merge_metadata(parsed.metadata or {}, outer)
    if parsed.unit_label:
        meta["unit"] = parsed.unit_label
    notes = list(parsed.notes) + list(conflicts)
    if meta.get("temperature_c") in (None, ""):
        notes.append("no temperature given: assumed 25 °C")

    part, lot_code, unit_label, fixture = resolve_subject(meta, source, cache)
    if ctx.kind and ctx.kind != parsed.kind:
        raise Rejected(
            Problem(
                f"the form says kind '{ctx.kind}' but the file holds a '{parsed.kind}' sweep",
                file=source,
                field="kind",
            )
        )
    bias = np.asarray(parsed.bias_v, dtype=float)
    points: dict = {"bias_v": bias.tolist()}
    calibration = None
    if parsed.kind == "fv":
        if fixture.kind != FixtureKind.OSCILLATOR:
            raise Rejected(
                Problem(
                    f"a frequency sweep needs an oscillator fixture; '{fixture.name}' is a meter",
                    file=source,
                    field="fixture",
                )
            )
        at = meta.get("measured_at")
        if at is None:
            at = timezone.now()
            notes.append("no measurement time given: used the upload time to pick the calibration")
        calibration = calibration_in_force(fixture, at)
        try:
            cap, sigma = capacitance_from_frequency(
                np.asarray(parsed.frequency_hz, dtype=float), as_physics(calibration)
            )
        except PhysicsInputError as exc:
            raise Rejected(Problem(str(exc), file=source, column="frequency")) from None
        points["frequency_hz"] = np.asarray(parsed.frequency_hz, dtype=float).tolist()
        points["capacitance_f"] = np.asarray(cap, dtype=float).tolist()
        points["capacitance_sigma_f"] = np.asarray(sigma, dtype=float).tolist()
        notes.append(
            f"converted frequency to capacitance with the calibration of "
            f"{calibration.measured_at:%Y-%m-%d %H:%M}"
        )
    else:
        points["capacitance_f"] = np.asarray(parsed.capacitance_f, dtype=float).tolist()
    extras = {k: np.asarray(v, dtype=float).tolist() for k, v in (parsed.extras or {}).items()}
    if extras:
        points["extras"] = extras
    result = fit_prepared_points(points, ctx.model, source) if fit else None
    if part.rated_reverse_v is not None and float(bias.max()) > part.rated_reverse_v:
        notes.append(
            f"CAUTION: the sweep reaches {bias.max():g} V reverse, beyond the part's rating of "
            f"{part.rated_reverse_v:g} V"
        )
    return _Prepared(
        parsed=parsed,
        meta=meta,
        part=part,
        lot_code=lot_code,
        unit_label=unit_label,
        fixture=fixture,
        points=points,
        calibration=calibration,
        result=result,
        notes=notes,
        model=ctx.model,
    )


def fit_prepared_points(points: dict, model: str, source: str):
    """The single-sweep fit of converted points, refusals located at ``source``."""
    try:
        return run_fit(points["bias_v"], points["capacitance_f"], model)
    except Rejected as exc:
        raise Rejected([replace(p, file=p.file or source) for p in exc.problems]) from None


def _temperature(value) -> float:
    # Bench default when neither the file nor the form says: room temperature.
    return 25.0 if value in (None, "") else float(value)


def _illumination(value) -> str:
    if value in (None, ""):
        return Illumination.DARK
    if value not in Illumination.values:
        raise Rejected(Problem(f"illumination '{value}' is not one of {Illumination.values}"))
    return value


def unit_for(part: Part, lot_code: str, unit_label: str, notes: list[str]) -> Unit:
    """The unit (and its lot), created when new with a note saying so. Inside a transaction."""
    lot, created = Lot.objects.get_or_create(part=part, code=lot_code)
    if created:
        notes.append(f"created lot {lot_code} of {part.part_number}")
    unit, created = Unit.objects.get_or_create(lot=lot, label=unit_label)
    if created:
        notes.append(f"created unit {unit_label} in lot {lot_code}")
    return unit


def keep_raw(
    unit: Unit, data: bytes, raw_name: str, written: list[str]
) -> tuple[str, str, Sweep | None]:
    """sha256 of the raw bytes, their storage path, and the unit's sweep already holding them.

    When no sweep of ``unit`` holds these bytes they are saved (content-addressed) and the
    path is appended to ``written`` so a rollback can remove it.
    """
    sha = _sha256(data)
    existing = Sweep.objects.filter(unit=unit, raw_sha256=sha).first()
    if existing is not None:
        return sha, existing.raw_file.name, existing
    return sha, save_raw(sha, data, raw_name, written), None


def save_raw(sha: str, data: bytes, raw_name: str, written: list[str]) -> str:
    """Store raw bytes content-addressed (once); returns the storage path, noting new files."""
    path = f"raw/{sha[:2]}/{sha}/{_safe_name(raw_name)}"
    if not default_storage.exists(path):
        path = default_storage.save(path, ContentFile(data))
        written.append(path)
    return path


def build_sweep(
    prep: _Prepared, unit: Unit, sha: str, path: str, data: bytes, raw_name: str, user, notes
) -> Sweep:
    """The unsaved sweep row of a prepared sweep (the bulk import inserts many at once)."""
    meta = prep.meta
    bias = np.asarray(prep.points["bias_v"])
    return Sweep(
        unit=unit,
        fixture=prep.fixture,
        kind=prep.parsed.kind,
        calibration=prep.calibration,
        raw_file=path,
        raw_name=raw_name[:255],
        raw_sha256=sha,
        raw_size=len(data),
        points=prep.points,
        points_sha256=points_hash(prep.points["bias_v"], prep.points["capacitance_f"]),
        n_points=len(bias),
        bias_min_v=float(bias.min()),
        bias_max_v=float(bias.max()),
        bias_negated=bool(prep.parsed.bias_negated),
        temperature_c=_temperature(meta.get("temperature_c")),
        illumination=_illumination(meta.get("illumination")),
        test_frequency_hz=meta.get("test_frequency_hz") or prep.fixture.test_frequency_hz,
        test_level_v=meta.get("test_level_v") or prep.fixture.test_level_v,
        operator=str(meta.get("operator") or "")[:80],
        measured_at=meta.get("measured_at"),
        notes=notes,
        metadata=_jsonable(meta),
        uploaded_by=user,
    )


def _store(prep: _Prepared, data: bytes, raw_name: str, user, origin: str, written: list[str]):
    """Write one prepared sweep; returns (status, sweep, fit, notes). Inside a transaction."""
    notes = list(prep.notes)
    unit = unit_for(prep.part, prep.lot_code, prep.unit_label, notes)
    sha, path, existing = keep_raw(unit, data, raw_name, written)
    if existing is not None:
        return "duplicate", existing, existing.current_fit, notes + ["this file is already stored"]
    sweep = build_sweep(prep, unit, sha, path, data, raw_name, user, notes)
    sweep.save()
    fit = fit_sweep(
        sweep, model=prep.model, origin=origin, user=user, result=prep.result, new_sweep=True
    )
    return "stored", sweep, fit, notes


def _safe_name(name: str) -> str:
    base = name.replace("\\", "/").rsplit("/", 1)[-1]
    cleaned = "".join(ch if ch.isalnum() or ch in "._-" else "_" for ch in base)
    return (cleaned or "sweep")[:120]


def _jsonable(meta: dict) -> dict:
    return json.loads(json.dumps(meta, default=str))


def _discard(paths: list[str]) -> None:
    """Remove files written by a rolled-back transaction unless a stored sweep uses them."""
    for path in paths:
        if not Sweep.objects.filter(raw_file=path).exists():
            default_storage.delete(path)


def _record_parsed(
    sweeps: list[ParsedSweep], data: bytes, raw_name: str, ctx: SweepContext, user, origin: str
) -> list[Outcome]:
    """Record every sweep of one file in one transaction: all or nothing."""
    sources = [_label(raw_name, s) for s in sweeps]
    try:
        prepared = [_prepare(s, ctx, raw_name) for s in sweeps]
    except Rejected as exc:
        return [Outcome(src, "rejected", problems=exc.problems) for src in sources]
    return store_atomically(
        sources,
        raw_name,
        lambda written: [_store(p, data, raw_name, user, origin, written) for p in prepared],
    )


def store_atomically(sources: list[str], raw_name: str, store) -> list[Outcome]:
    """Run ``store(written)`` in one transaction: every sweep stored, or nothing.

    ``store`` returns one ``(status, sweep, fit, notes)`` per source and appends the raw
    files it saves to ``written``; they are removed again when the transaction fails.
    """
    written: list[str] = []
    try:
        with transaction.atomic():
            stored = store(written)
    except Rejected as exc:
        _discard(written)
        return [Outcome(src, "rejected", problems=exc.problems) for src in sources]
    except IntegrityError as exc:
        _discard(written)
        log.info("integrity error while recording %s: %s", raw_name, exc)
        # A concurrent upload of the same bytes for the same unit won the race.
        return [
            Outcome(
                src,
                "rejected",
                problems=[Problem("stored concurrently; upload again", file=raw_name)],
            )
            for src in sources
        ]
    except BaseException:
        _discard(written)
        raise
    return [
        Outcome(src, status, sweep=sweep, fit=fit, notes=notes)
        for src, (status, sweep, fit, notes) in zip(sources, stored, strict=True)
    ]


def _label(raw_name: str, parsed: ParsedSweep) -> str:
    return f"{raw_name} [{parsed.unit_label}]" if parsed.unit_label else raw_name


def _parse(data: bytes, filename: str) -> list[ParsedSweep]:
    try:
        return parse_file(data, filename)
    except ParseError as exc:
        raise Rejected.from_parse_error(exc) from None


def record_file(
    data: bytes,
    filename: str,
    ctx: SweepContext | None = None,
    *,
    user=None,
    origin: str = "upload",
    recompute: bool = True,
) -> list[Outcome]:
    """Parse, convert, fit and store one uploaded file (or every file of an archive)."""
    ctx = ctx or SweepContext()
    if filename.lower().endswith(ARCHIVE_SUFFIXES):
        return import_archive(data, filename, ctx, user=user, origin=origin, recompute=recompute)
    if is_impedance_file(data, filename):
        from labdb.measurements.services.impedance import record_impedance_file

        return record_impedance_file(data, filename, ctx, user=user, origin=origin)
    try:
        sweeps = _parse(data, filename)
    except Rejected as exc:
        return [Outcome(filename, "rejected", problems=exc.problems)]
    outcomes = _record_parsed(sweeps, data, filename, ctx, user, origin)
    if recompute:
        _recompute(outcomes)
    return outcomes


def _recompute(outcomes: list[Outcome]) -> None:
    lots = {o.sweep.unit.lot_id for o in outcomes if o.status == "stored" and o.sweep}
    if lots:
        transaction.on_commit(lambda: lots_changed(lots))


def import_archive(
    data: bytes,
    filename: str,
    ctx: SweepContext | None = None,
    *,
    user=None,
    origin: str = "upload",
    recompute: bool = True,
    progress=None,
) -> list[Outcome]:
    """Record every member of a zip archive; manifest rows win over the files' own metadata."""
    from labdb.ingest import read_archive
    from labdb.measurements.services.limits import archive_limits
    from labdb.measurements.services.manifest import context_for_member

    ctx = ctx or SweepContext()
    try:
        entries = read_archive(data, filename, archive_limits())
    except ParseError as exc:
        return [Outcome(filename, "rejected", problems=Rejected.from_parse_error(exc).problems)]
    outcomes: list[Outcome] = []
    for i, entry in enumerate(entries, 1):
        if entry.error is not None:
            problems = Rejected.from_parse_error(entry.error).problems
            outcomes.append(Outcome(entry.name, "rejected", problems=problems))
        else:
            try:
                member_ctx = context_for_member(ctx, entry.manifest)
            except Rejected as exc:
                outcomes.append(Outcome(entry.name, "rejected", problems=exc.problems))
            else:
                if entry.impedance is not None:
                    from labdb.measurements.services.impedance import record_member_impedance

                    outcomes += record_member_impedance(entry, member_ctx, user, origin)
                else:
                    outcomes += _record_parsed(
                        entry.sweeps, entry.data, entry.name, member_ctx, user, origin
                    )
        if progress is not None:
            progress(i, len(entries))
    if recompute:
        _recompute(outcomes)
    return outcomes


def record_points(
    ctx: SweepContext,
    bias_v,
    *,
    capacitance_f=None,
    frequency_hz=None,
    user=None,
    origin: str = "api",
) -> list[Outcome]:
    """Record a sweep given as arrays (REST clients); the canonical JSON is kept as raw file."""
    try:
        parsed = sweep_from_arrays(bias_v, capacitance_f=capacitance_f, frequency_hz=frequency_hz)
    except ParseError as exc:
        return [Outcome("points", "rejected", problems=Rejected.from_parse_error(exc).problems)]
    payload = {"bias_v": list(bias_v)}
    if capacitance_f is not None:
        payload["capacitance_f"] = list(capacitance_f)
    if frequency_hz is not None:
        payload["frequency_hz"] = list(frequency_hz)
    data = json.dumps(payload, sort_keys=True).encode()
    outcomes = _record_parsed([parsed], data, "points.json", ctx, user, origin)
    _recompute(outcomes)
    return outcomes


def preview_file(data: bytes, filename: str, ctx: SweepContext | None = None) -> list[Outcome]:
    """Parse, convert and fit without storing anything: what the upload page shows first."""
    ctx = ctx or SweepContext()
    if is_impedance_file(data, filename):
        from labdb.measurements.services.impedance import preview_impedance_file

        return preview_impedance_file(data, filename, ctx)
    try:
        sweeps = _parse(data, filename)
    except Rejected as exc:
        return [Outcome(filename, "rejected", problems=exc.problems)]
    out = []
    for parsed in sweeps:
        src = _label(filename, parsed)
        try:
            prep = _prepare(parsed, ctx, filename)
        except Rejected as exc:
            out.append(Outcome(src, "rejected", problems=exc.problems, parsed=parsed))
            continue
        out.append(
            Outcome(
                src,
                "preview",
                notes=prep.notes,
                parsed=parsed,
                fit_result=prep.result,
                capacitance_f=prep.points["capacitance_f"],
            )
        )
    return out
