"""Fit versions: write version n+1 only when inputs, model choice or fitter changed."""

from __future__ import annotations

import hashlib
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
from django.db import transaction
from django.db.models import Max

from labdb.measurements.errors import Problem, Rejected
from labdb.measurements.models import Fit, Sweep, SweepKind
from labdb.physics import (
    FITTER_VERSION,
    JunctionFit,
    PhysicsInputError,
    fit_junction,
    fit_junction_batch,
)

MODEL_CHOICES = ("auto", "junction", "junction+cp")


def points_hash(bias_v, capacitance_f) -> str:
    """sha256 of the fitted inputs (bias [V], C [F]) as float64 bytes."""
    h = hashlib.sha256()
    h.update(np.asarray(bias_v, dtype="<f8").tobytes())
    h.update(b"|")
    h.update(np.asarray(capacitance_f, dtype="<f8").tobytes())
    return h.hexdigest()


def input_hash(points_sha: str, model_choice: str) -> str:
    """What decides whether a refit is new: the points, the model asked for, the fitter."""
    text = f"{points_sha}|{model_choice}|{FITTER_VERSION}"
    return hashlib.sha256(text.encode()).hexdigest()


def run_fit(bias_v, capacitance_f, model_choice: str) -> JunctionFit:
    """The physics fit, with its refusals turned into a domain rejection."""
    if model_choice not in MODEL_CHOICES:
        raise Rejected(Problem(f"unknown model {model_choice!r}; use one of {MODEL_CHOICES}"))
    try:
        return fit_junction(np.asarray(bias_v), np.asarray(capacitance_f), model=model_choice)
    except PhysicsInputError as exc:
        raise Rejected(Problem(f"cannot fit: {exc}")) from None


def build_fit(
    result: JunctionFit,
    *,
    sweep=None,
    lot_summary=None,
    version: int,
    in_sha: str,
    origin: str,
    user=None,
) -> Fit:
    """The unsaved version :func:`store_fit` stores (the bulk import inserts many at once)."""
    p = result.params
    return Fit(
        sweep=sweep,
        lot_summary=lot_summary,
        version=version,
        model=result.model,
        params=dict(p),
        stderr={k: _finite_or_none(v) for k, v in result.stderr.items()},
        correlation=[[_finite_or_none(v) for v in row] for row in result.correlation],
        cjo=p["cjo"],
        vj=p["vj"],
        m=p["m"],
        cp=p.get("cp", 0.0),
        rms_rel=result.rms_rel,
        r2=_finite_or_none(result.r2),
        aicc=_finite_or_none(result.aicc),
        n_points=result.n_points,
        bias_min_v=result.bias_min_v,
        bias_max_v=result.bias_max_v,
        converged=result.converged,
        message=(result.message or "")[:300],
        warnings=list(result.warnings),
        fitter_version=result.fitter_version,
        input_sha256=in_sha,
        origin=origin,
        created_by=user,
    )


def store_fit(
    result: JunctionFit,
    *,
    sweep=None,
    lot_summary=None,
    version: int,
    in_sha: str,
    origin: str,
    user=None,
) -> Fit:
    """Store one fit version of a sweep or a lot summary."""
    fit = build_fit(
        result,
        sweep=sweep,
        lot_summary=lot_summary,
        version=version,
        in_sha=in_sha,
        origin=origin,
        user=user,
    )
    fit.save()
    return fit


def _finite_or_none(value):
    """JSON (and PostgreSQL) have no NaN or infinity: an undetermined number is stored as null."""
    return float(value) if value is not None and np.isfinite(value) else None


def fit_sweep(
    sweep: Sweep,
    *,
    model: str = "auto",
    origin: str = "refit",
    user=None,
    result=None,
    new_sweep: bool = False,
) -> Fit | None:
    """Fit ``sweep`` and store a new version, or return None when nothing would change.

    Runs inside the caller's transaction when there is one; the sweep row is locked so two
    refits of one sweep never write the same version number. ``new_sweep`` says the sweep
    was created in the caller's (still open) transaction: nobody else can see it yet, so
    version 1 is written without the lock and the version query.
    """
    if sweep.kind == SweepKind.ZF:
        raise Rejected(Problem(f"sweep {sweep.pk} is an impedance sweep: it has no junction fit"))
    if new_sweep:
        pts = sweep.points
        if result is None:
            result = run_fit(pts["bias_v"], pts["capacitance_f"], model)
        in_sha = input_hash(sweep.points_sha256, model)
        fit = store_fit(result, sweep=sweep, version=1, in_sha=in_sha, origin=origin, user=user)
        Sweep.objects.filter(pk=sweep.pk).update(current_fit=fit)
        sweep.current_fit = fit
        return fit
    with transaction.atomic():
        locked = Sweep.objects.select_for_update().get(pk=sweep.pk)
        pts = locked.points
        in_sha = input_hash(locked.points_sha256, model)
        current = locked.current_fit
        if current is not None and current.input_sha256 == in_sha:
            return None
        if result is None:
            result = run_fit(pts["bias_v"], pts["capacitance_f"], model)
        last = locked.fits.aggregate(v=Max("version"))["v"] or 0
        fit = store_fit(
            result, sweep=locked, version=last + 1, in_sha=in_sha, origin=origin, user=user
        )
        Sweep.objects.filter(pk=locked.pk).update(current_fit=fit)
        sweep.current_fit = fit
        return fit


@dataclass
class RefitSummary:
    """Counts of a refit run, and the sweeps that could not be fitted with the reason."""

    examined: int = 0
    new_versions: int = 0
    unchanged: int = 0
    failed: list[tuple[int, str]] = field(default_factory=list)
    lots: set[int] = field(default_factory=set)

    def as_rows(self) -> list[tuple[str, int]]:
        return [
            ("examined", self.examined),
            ("new versions", self.new_versions),
            ("unchanged", self.unchanged),
            ("failed", len(self.failed)),
        ]


REFIT_CHUNK = 500


def _batch_results(sweeps: list[Sweep], model: str) -> list:
    """Fit many sweeps at once (vectorised); None where a sweep must be fitted alone."""
    if not sweeps:
        return []
    try:
        return fit_junction_batch(
            [s.points["bias_v"] for s in sweeps],
            [s.points["capacitance_f"] for s in sweeps],
            model=model,
        )
    except PhysicsInputError:
        # One unfittable sweep refuses the whole batch; fit each alone to name it.
        return [None] * len(sweeps)


def _refit_impedance(sweep: Sweep, summary: RefitSummary, origin: str, user) -> None:
    from labdb.measurements.services.impedance import fit_impedance_sweep

    try:
        fit = fit_impedance_sweep(sweep, origin=origin, user=user)
    except Rejected as exc:
        summary.failed.append((sweep.pk, str(exc)))
        return
    if fit is None:
        summary.unchanged += 1
    else:
        summary.new_versions += 1


def refit_sweeps(
    sweep_ids: Iterable[int],
    *,
    model: str = "auto",
    user=None,
    origin: str = "refit",
    progress=None,
) -> RefitSummary:
    """Refit the given sweeps; each stored in its own transaction, so one failure loses nothing.

    Sweeps whose current fit already has these inputs are skipped before any fitting; the
    rest are fitted together by the vectorised batch fitter (same answers as the single fit).
    """
    from labdb.quality.hooks import lots_changed

    if model not in MODEL_CHOICES:
        raise Rejected(Problem(f"unknown model {model!r}; use one of {MODEL_CHOICES}"))
    summary = RefitSummary()
    ids = list(sweep_ids)
    for start in range(0, len(ids), REFIT_CHUNK):
        chunk = Sweep.objects.filter(pk__in=ids[start : start + REFIT_CHUNK]).select_related(
            "unit", "current_fit"
        )
        todo = []
        for sweep in chunk:
            summary.examined += 1
            if sweep.kind == SweepKind.ZF:  # impedance sweeps refit their R–L–C equivalent
                _refit_impedance(sweep, summary, origin, user)
                continue
            current = sweep.current_fit
            if current is not None and current.input_sha256 == input_hash(
                sweep.points_sha256, model
            ):
                summary.unchanged += 1
            else:
                todo.append(sweep)
        for sweep, result in zip(todo, _batch_results(todo, model), strict=True):
            try:
                fit = fit_sweep(sweep, model=model, origin=origin, user=user, result=result)
            except Rejected as exc:
                summary.failed.append((sweep.pk, str(exc)))
                continue
            if fit is None:
                summary.unchanged += 1
            else:
                summary.new_versions += 1
                summary.lots.add(sweep.unit.lot_id)
        if progress is not None:
            progress(summary.examined)
    if summary.lots:
        lots_changed(summary.lots)
    return summary
