"""Record impedance sweeps (one bias each) with their series R–L–C fit, and refit them.

An impedance sweep is a :class:`Sweep` of kind ``zf``: its points hold ``frequency_hz``,
``z_real`` and ``z_imag`` [ohm] and the one ``bias_v`` [V]; its fit versions are
:class:`ImpedanceFit` rows, immutable like junction fits. Recording reuses the C–V path's
helpers in :mod:`labdb.measurements.services.record`: the same catalogue lookup, the same
content-addressed raw file and the same one-transaction-per-file rule.
"""

from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass

import numpy as np
from django.db import transaction
from django.db.models import Max

from labdb.catalog.models import Part
from labdb.ingest import ParseError, merge_metadata
from labdb.ingest.impedance import BIAS_KEYS, ParsedImpedance, parse_impedance_file
from labdb.ingest.metadata import squash_key
from labdb.ingest.sweep import FORWARD_LIMIT_V
from labdb.ingest.units import parse_quantity, split_header
from labdb.measurements.errors import Problem, Rejected
from labdb.measurements.models import Fixture, FixtureKind, ImpedanceFit, Sweep, SweepKind
from labdb.measurements.services.record import (
    Outcome,
    SweepContext,
    _illumination,
    _jsonable,
    _temperature,
    keep_raw,
    resolve_subject,
    store_atomically,
    unit_for,
)
from labdb.physics.errors import PhysicsInputError
from labdb.physics.impedance import IMPEDANCE_FITTER_VERSION, SeriesRLCFit, fit_series_rlc


@dataclass
class _PreparedZ:
    parsed: ParsedImpedance
    meta: dict
    part: Part
    lot_code: str
    unit_label: str
    fixture: Fixture
    bias_v: float
    result: SeriesRLCFit
    notes: list[str]


def zf_points_hash(frequency_hz, z_real, z_imag, bias_v: float) -> str:
    """sha256 of an impedance sweep's fitted inputs as float64 bytes (f [Hz], Z [ohm], V)."""
    h = hashlib.sha256()
    for arr in (frequency_hz, z_real, z_imag, [bias_v]):
        h.update(np.asarray(arr, dtype="<f8").tobytes())
        h.update(b"|")
    return h.hexdigest()


def _input_hash(points_sha: str) -> str:
    return hashlib.sha256(f"{points_sha}|{IMPEDANCE_FITTER_VERSION}".encode()).hexdigest()


def describe_fit(fit: SeriesRLCFit) -> str:
    """One line for notes and previews, in bench units."""
    srf = "not reached" if not math.isfinite(fit.srf_hz) else f"{fit.srf_hz / 1e6:.4g} MHz"
    return (
        f"series equivalent: Cs {fit.cs_f * 1e12:.4g} pF, Rs {fit.rs_ohm:.3g} ohm, "
        f"Ls {fit.ls_h * 1e9:.3g} nH, SRF {srf}, RMS misfit {fit.rms_rel:.2%}"
    )


def _bias(parsed: ParsedImpedance, ctx: SweepContext, bias_v: float | None, notes: list[str]):
    given = ctx.bias_v if ctx.bias_v is not None else bias_v
    bias = parsed.bias_v
    if given is not None:
        if bias is not None and not math.isclose(bias, given, rel_tol=1e-9, abs_tol=1e-12):
            notes.append(
                f"bias: the file says {bias:g} V but {given:g} V was given; using {given:g} V"
            )
        bias = float(given)
    if bias is None:
        raise Rejected(
            Problem(
                "no bias given for this impedance sweep: add a line '# bias: 2 V' (in a "
                "Touchstone file '! bias: 2 V') or give the bias on the form",
                file=parsed.source,
                field="bias_v",
            )
        )
    if not math.isfinite(bias) or bias < -FORWARD_LIMIT_V:
        raise Rejected(
            Problem(
                f"bias {bias:g} V: reverse bias is positive; forward bias beyond "
                f"-{FORWARD_LIMIT_V:g} V is not a varactor measurement",
                file=parsed.source,
                field="bias_v",
            )
        )
    return bias


def _prepare(parsed: ParsedImpedance, ctx: SweepContext, bias_v: float | None) -> _PreparedZ:
    source = parsed.source
    meta, conflicts = merge_metadata(parsed.metadata, ctx.as_meta())
    notes = [f"read as {parsed.layout}", *parsed.notes, *conflicts]
    if meta.get("temperature_c") in (None, ""):
        notes.append("no temperature given: assumed 25 °C")
    part, lot_code, unit_label, fixture = resolve_subject(meta, source)
    if ctx.kind not in (None, "", SweepKind.ZF):
        raise Rejected(
            Problem(
                f"the form says kind '{ctx.kind}' but the file holds an impedance sweep",
                file=source,
                field="kind",
            )
        )
    if fixture.kind == FixtureKind.OSCILLATOR:
        raise Rejected(
            Problem(
                f"an impedance sweep needs a meter or analyser fixture; '{fixture.name}' is an "
                "oscillator",
                file=source,
                field="fixture",
            )
        )
    bias = _bias(parsed, ctx, bias_v, notes)
    try:
        result = fit_series_rlc(parsed.frequency_hz, parsed.z_ohm)
    except PhysicsInputError as exc:
        raise Rejected(
            Problem(f"cannot fit the series R–L–C equivalent: {exc}", file=source)
        ) from None
    notes.append(describe_fit(result))
    if part.rated_reverse_v is not None and bias > part.rated_reverse_v:
        notes.append(
            f"CAUTION: the sweep was taken at {bias:g} V reverse, beyond the part's rating of "
            f"{part.rated_reverse_v:g} V"
        )
    return _PreparedZ(parsed, meta, part, lot_code, unit_label, fixture, bias, result, notes)


def _store(prep: _PreparedZ, data: bytes, raw_name: str, user, origin: str, written: list[str]):
    """Write one prepared impedance sweep and its fit v1. Inside a transaction."""
    notes = list(prep.notes)
    unit = unit_for(prep.part, prep.lot_code, prep.unit_label, notes)
    sha, path, existing = keep_raw(unit, data, raw_name, written)
    if existing is not None:
        return "duplicate", existing, None, notes + ["this file is already stored"]
    f = np.asarray(prep.parsed.frequency_hz, dtype=float)
    z = np.asarray(prep.parsed.z_ohm, dtype=complex)
    points = {
        "bias_v": prep.bias_v,
        "frequency_hz": f.tolist(),
        "z_real": z.real.tolist(),
        "z_imag": z.imag.tolist(),
        "z0_ohm": prep.parsed.z0_ohm,
    }
    meta = prep.meta
    sweep = Sweep.objects.create(
        unit=unit,
        fixture=prep.fixture,
        kind=SweepKind.ZF,
        raw_file=path,
        raw_name=raw_name[:255],
        raw_sha256=sha,
        raw_size=len(data),
        points=points,
        points_sha256=zf_points_hash(f, z.real, z.imag, prep.bias_v),
        n_points=int(f.size),
        bias_min_v=prep.bias_v,
        bias_max_v=prep.bias_v,
        temperature_c=_temperature(meta.get("temperature_c")),
        illumination=_illumination(meta.get("illumination")),
        test_level_v=meta.get("test_level_v") or prep.fixture.test_level_v,
        operator=str(meta.get("operator") or "")[:80],
        measured_at=meta.get("measured_at"),
        notes=notes,
        metadata=_jsonable(meta | {"layout": prep.parsed.layout}),
        uploaded_by=user,
    )
    fit_impedance_sweep(sweep, origin=origin, user=user, result=prep.result)
    return "stored", sweep, None, notes


def _parse(data: bytes, filename: str) -> ParsedImpedance:
    try:
        return parse_impedance_file(data, filename)
    except ParseError as exc:
        raise Rejected.from_parse_error(exc) from None


def record_parsed_impedance(
    parsed: ParsedImpedance,
    data: bytes,
    raw_name: str,
    ctx: SweepContext,
    *,
    user=None,
    origin: str = "upload",
    bias_v: float | None = None,
) -> list[Outcome]:
    """Store one parsed impedance sweep (an archive member or a single file) or nothing.

    ``bias_v`` [V] is the outer bias (a manifest row); the form's ``ctx.bias_v`` wins over it,
    and both win over the file's own bias line.
    """
    try:
        prep = _prepare(parsed, ctx, bias_v)
    except Rejected as exc:
        return [Outcome(raw_name, "rejected", problems=exc.problems, parsed=parsed)]
    return store_atomically(
        [raw_name], raw_name, lambda written: [_store(prep, data, raw_name, user, origin, written)]
    )


def record_impedance_file(
    data: bytes,
    filename: str,
    ctx: SweepContext | None = None,
    *,
    user=None,
    origin: str = "upload",
    bias_v: float | None = None,
) -> list[Outcome]:
    """Parse, fit and store one impedance sweep file (``.s1p`` or a table); all or nothing.

    Parameters
    ----------
    data : bytes
        The file, kept byte for byte.
    filename : str
        Its name (``.s1p`` is read as Touchstone).
    ctx : SweepContext, optional
        Form values; ``ctx.bias_v`` [V] gives the bias when the file has none.
    bias_v : float, optional
        Bias [V] from a manifest row.

    Returns
    -------
    list of Outcome
        One outcome: ``stored``, ``duplicate`` or ``rejected`` (with located problems).
    """
    ctx = ctx or SweepContext()
    try:
        parsed = _parse(data, filename)
    except Rejected as exc:
        return [Outcome(filename, "rejected", problems=exc.problems)]
    return record_parsed_impedance(
        parsed, data, filename, ctx, user=user, origin=origin, bias_v=bias_v
    )


def manifest_bias(row: dict | None, source: str) -> float | None:
    """Reverse bias [V] from a manifest row's ``bias`` column (volts), or None."""
    other = (row or {}).get("other") or {}
    for key, value in other.items():
        if squash_key(split_header(key)[0]) in BIAS_KEYS and str(value).strip():
            try:
                return parse_quantity(value, "V")
            except ValueError as exc:
                problem = Problem(f"manifest {key}: {exc}", file=source, field="bias_v")
                raise Rejected(problem) from None
    return None


def record_member_impedance(entry, ctx: SweepContext, user, origin: str) -> list[Outcome]:
    """Store an archive member holding an impedance sweep; its manifest row may give the bias."""
    try:
        bias = manifest_bias(entry.manifest, entry.name)
    except Rejected as exc:
        return [Outcome(entry.name, "rejected", problems=exc.problems)]
    return record_parsed_impedance(
        entry.impedance, entry.data, entry.name, ctx, user=user, origin=origin, bias_v=bias
    )


def preview_impedance_file(
    data: bytes, filename: str, ctx: SweepContext | None = None
) -> list[Outcome]:
    """Parse and fit without storing; the fit is summarised in the notes."""
    ctx = ctx or SweepContext()
    try:
        parsed = _parse(data, filename)
        prep = _prepare(parsed, ctx, None)
    except Rejected as exc:
        return [Outcome(filename, "rejected", problems=exc.problems)]
    notes = [f"impedance sweep at {prep.bias_v:g} V, {parsed.frequency_hz.size} frequencies"]
    return [Outcome(filename, "preview", notes=notes + prep.notes, parsed=None)]


def stored_fit(fit: SeriesRLCFit, **fields) -> ImpedanceFit:
    """Create the database row of a physics fit (``fields``: sweep, version, origin, ...)."""
    srf = fit.srf_hz
    return ImpedanceFit.objects.create(
        rs_ohm=fit.rs_ohm,
        ls_h=fit.ls_h,
        cs_f=fit.cs_f,
        srf_hz=srf if math.isfinite(srf) else None,
        stderr=fit.to_dict()["stderr"],
        correlation=fit.to_dict()["correlation"],
        rms_rel=fit.rms_rel,
        n_points=fit.n_points,
        frequency_min_hz=fit.frequency_min_hz,
        frequency_max_hz=fit.frequency_max_hz,
        converged=fit.converged,
        message=fit.message[:300],
        warnings=list(fit.warnings),
        fitter_version=fit.fitter_version,
        **fields,
    )


def sweep_impedance(sweep: Sweep) -> tuple[np.ndarray, np.ndarray]:
    """Frequency [Hz] and complex impedance [ohm] of a stored impedance sweep."""
    pts = sweep.points
    z = np.asarray(pts["z_real"], dtype=float) + 1j * np.asarray(pts["z_imag"], dtype=float)
    return np.asarray(pts["frequency_hz"], dtype=float), z


def fit_impedance_sweep(
    sweep: Sweep, *, origin: str = "refit", user=None, result: SeriesRLCFit | None = None
) -> ImpedanceFit | None:
    """Fit ``sweep`` (kind ``zf``) and store a new version, or None when nothing would change.

    A version n+1 is written only when the points or the fitter version changed; the sweep
    row is locked so two refits never write the same version number.
    """
    if sweep.kind != SweepKind.ZF:
        raise Rejected(Problem(f"sweep {sweep.pk} is not an impedance sweep"))
    with transaction.atomic():
        locked = Sweep.objects.select_for_update().get(pk=sweep.pk)
        in_sha = _input_hash(locked.points_sha256)
        latest = locked.impedance_fits.order_by("-version").first()
        if latest is not None and latest.input_sha256 == in_sha:
            return None
        if result is None:
            try:
                result = fit_series_rlc(*sweep_impedance(locked))
            except PhysicsInputError as exc:
                raise Rejected(Problem(f"cannot fit: {exc}")) from None
        last = locked.impedance_fits.aggregate(v=Max("version"))["v"] or 0
        return stored_fit(
            result, sweep=locked, version=last + 1, input_sha256=in_sha, origin=origin,
            created_by=user,
        )  # fmt: skip


def current_impedance_fit(sweep: Sweep) -> ImpedanceFit | None:
    """The newest fit version of an impedance sweep."""
    return sweep.impedance_fits.order_by("-version").first()
