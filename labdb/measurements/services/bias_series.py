"""Derive a C–V sweep (with Q–V beside it) from a unit's bias series of impedance sweeps.

The derived sweep is an ordinary ``cv`` sweep: fitted and versioned with ``fit_sweep``, seen
by lot summaries and search. It links to its sources (``Sweep.derived_from``); its raw
"file" is the canonical JSON of the derived points, so deriving the same series at the same
frequency twice finds the stored sweep instead of writing another. Q(V) and each bias's
self-resonant frequency are kept in ``points["extras"]`` (``q``, ``srf_hz``).
"""

from __future__ import annotations

import json
import math
from collections import Counter, defaultdict

from django.db import transaction

from labdb.catalog.models import Unit
from labdb.measurements.errors import Problem, Rejected
from labdb.measurements.models import ImpedanceFit, Sweep, SweepKind
from labdb.measurements.services.fits import fit_sweep, points_hash, run_fit
from labdb.measurements.services.impedance import (
    current_impedance_fit,
    fit_impedance_sweep,
    sweep_impedance,
)
from labdb.measurements.services.record import Outcome, keep_raw, store_atomically
from labdb.physics.bias_series import MIN_BIASES, BiasSeriesCV, ImpedanceSweep, bias_series_to_cv
from labdb.physics.errors import PhysicsInputError
from labdb.physics.impedance import IMPEDANCE_FITTER_VERSION
from labdb.quality.hooks import lots_changed

DERIVED_METHOD = "Ceff(f) = -1/(2*pi*f*X) and Q(f) = |X|/Rs of each bias's series R-L-C equivalent"


def _finite_or_none(values) -> list[float | None]:
    return [float(v) if math.isfinite(v) else None for v in values]


def impedance_groups(unit: Unit) -> dict[tuple[str, float], list[Sweep]]:
    """The unit's live impedance sweeps by condition (illumination, temperature [°C])."""
    groups: dict[tuple[str, float], list[Sweep]] = defaultdict(list)
    qs = Sweep.objects.filter(unit=unit, kind=SweepKind.ZF, archived=False).order_by("id")
    for sweep in qs:
        groups[(sweep.illumination, sweep.temperature_c)].append(sweep)
    return dict(groups)


def _one_per_bias(sweeps: list[Sweep]) -> tuple[list[Sweep], list[str]]:
    """Keep the newest sweep at each bias (by measurement time, then id)."""
    best: dict[float, Sweep] = {}
    for s in sweeps:
        key = (s.measured_at is not None, s.measured_at, s.pk)
        cur = best.get(s.bias_min_v)
        if cur is None or key > (cur.measured_at is not None, cur.measured_at, cur.pk):
            best[s.bias_min_v] = s
    dropped = len(sweeps) - len(best)
    notes = [f"{dropped} older sweeps at a repeated bias left out"] if dropped else []
    return sorted(best.values(), key=lambda s: s.bias_min_v), notes


def _series(sweeps: list[Sweep]) -> list[ImpedanceSweep]:
    newest: dict[int, ImpedanceFit] = {}
    for fit in ImpedanceFit.objects.filter(sweep__in=sweeps).order_by("sweep_id", "version"):
        newest[fit.sweep_id] = fit  # one query; the last version of each sweep wins
    out = []
    for s in sweeps:
        fit = newest.get(s.pk) or fit_impedance_sweep(s, origin="refit")
        f, z = sweep_impedance(s)
        out.append(ImpedanceSweep(s.bias_min_v, f, z, fit.as_physics()))
    return out


def _canonical(cv: BiasSeriesCV, ids: list[int]) -> bytes:
    body = {
        "kind": "cv",
        "derived_from": ids,
        "method": DERIVED_METHOD,
        "fitter_version": IMPEDANCE_FITTER_VERSION,
        "frequency_hz": cv.frequency_hz,
        "bias_v": cv.bias_v.tolist(),
        "capacitance_f": cv.capacitance_f.tolist(),
        "q": _finite_or_none(cv.q),
    }
    return (json.dumps(body, sort_keys=True, allow_nan=False) + "\n").encode()


def _store(unit, sources, cv, data, name, result, notes, user, origin, written):
    """Write the derived sweep, its links and fit v1, and archive what it supersedes."""
    sha, path, existing = keep_raw(unit, data, name, written)
    if existing is not None:
        return "duplicate", existing, existing.current_fit, notes + ["already derived"]
    ids = [s.pk for s in sources]
    points = {
        "bias_v": cv.bias_v.tolist(),
        "capacitance_f": cv.capacitance_f.tolist(),
        "capacitance_sigma_f": _finite_or_none(cv.capacitance_sigma_f),
        "extras": {"q": _finite_or_none(cv.q), "srf_hz": _finite_or_none(cv.srf_hz)},
    }
    first = sources[0]
    times = [s.measured_at for s in sources if s.measured_at is not None]
    fixture = Counter(s.fixture_id for s in sources).most_common(1)[0][0]
    operators = {s.operator for s in sources}
    sweep = Sweep.objects.create(
        unit=unit,
        fixture_id=fixture,
        kind=SweepKind.CV,
        raw_file=path,
        raw_name=name,
        raw_sha256=sha,
        raw_size=len(data),
        points=points,
        points_sha256=points_hash(points["bias_v"], points["capacitance_f"]),
        n_points=len(points["bias_v"]),
        bias_min_v=float(cv.bias_v.min()),
        bias_max_v=float(cv.bias_v.max()),
        temperature_c=first.temperature_c,
        illumination=first.illumination,
        test_frequency_hz=cv.frequency_hz,
        operator=operators.pop() if len(operators) == 1 else "",
        measured_at=max(times) if times else None,
        notes=notes,
        metadata={
            "derived": {"from": ids, "frequency_hz": cv.frequency_hz, "method": DERIVED_METHOD}
        },
        uploaded_by=user,
    )
    sweep.derived_from.set(ids)
    fit = fit_sweep(sweep, origin=origin, user=user, result=result)
    older = Sweep.objects.filter(
        unit=unit, kind=SweepKind.CV, archived=False, derived_from__isnull=False,
        illumination=first.illumination, temperature_c=first.temperature_c,
        test_frequency_hz=cv.frequency_hz,
    ).exclude(pk=sweep.pk).distinct()  # fmt: skip
    superseded = list(older.values_list("pk", flat=True))
    if superseded:
        Sweep.objects.filter(pk__in=superseded).update(archived=True)
        notes.append(f"archived the earlier derivation(s) {superseded} at this frequency")
        Sweep.objects.filter(pk=sweep.pk).update(notes=notes)
    return "stored", sweep, fit, notes


def derive_cv_from_bias_series(
    unit: Unit,
    frequency_hz: float | None = None,
    user=None,
    *,
    origin: str = "upload",
    model: str = "auto",
) -> list[Outcome]:
    """Turn each condition's bias series of ``unit`` into a stored, fitted C–V sweep.

    Parameters
    ----------
    unit : Unit
        The unit whose live impedance sweeps (kind ``zf``) form the series; sweeps are
        grouped by illumination and temperature, the newest kept at a repeated bias.
    frequency_hz : float, optional
        Test frequency [Hz] of the C–V; default: the lowest self-resonant frequency of the
        series / 10, rounded down to 1-2-5 (see :mod:`labdb.physics.bias_series`).
    user : User, optional
        Who asked (stored with the sweep and its fit).
    origin : str
        Fit origin (``upload`` for the page, ``api``, ``command``).
    model : str
        Junction model asked of the fit (``auto``, ``junction``, ``junction+cp``).

    Returns
    -------
    list of Outcome
        One per condition with enough biases: ``stored``, ``duplicate`` (this very series
        was derived before) or ``rejected``.

    Raises
    ------
    Rejected
        When the unit has no condition with :data:`MIN_BIASES` impedance sweeps.
    """
    groups = impedance_groups(unit)
    usable = {k: v for k, v in groups.items() if len({s.bias_min_v for s in v}) >= MIN_BIASES}
    if not usable:
        biases = sorted({s.bias_min_v for v in groups.values() for s in v})
        raise Rejected(
            Problem(
                f"unit {unit.label} has impedance sweeps at {len(biases)} biases under one "
                f"condition at most; a C–V needs at least {MIN_BIASES}",
                field="unit",
            )
        )
    outcomes: list[Outcome] = []
    for (illumination, temp), sweeps in sorted(usable.items()):
        label = f"bias series of {unit.label} ({illumination}, {temp:g} °C)"
        outcomes += _derive_one(unit, sweeps, frequency_hz, label, user, origin, model)
    if any(o.status == "stored" for o in outcomes):
        lot = unit.lot_id
        transaction.on_commit(lambda: lots_changed({lot}))
    return outcomes


def _derive_one(unit, sweeps, frequency_hz, label, user, origin, model) -> list[Outcome]:
    sources, notes = _one_per_bias(sweeps)
    try:
        cv = bias_series_to_cv(_series(sources), frequency_hz)
        result = run_fit(cv.bias_v, cv.capacitance_f, model)
    except PhysicsInputError as exc:
        return [Outcome(label, "rejected", problems=[Problem(str(exc), field="frequency_hz")])]
    except Rejected as exc:
        return [Outcome(label, "rejected", problems=exc.problems)]
    notes = [
        f"derived from {len(sources)} impedance sweeps at {cv.frequency_hz / 1e6:.6g} MHz",
        *cv.notes,
        *notes,
    ]
    ids = [sources[i].pk for i in cv.order]
    data = _canonical(cv, ids)
    name = f"derived_cv_{unit.label}_{cv.frequency_hz:.6g}Hz.json".replace("+", "")
    return store_atomically(
        [label],
        name,
        lambda written: [
            _store(unit, sources, cv, data, name, result, notes, user, origin, written)
        ],
    )


def derived_sweeps(unit: Unit):
    """The unit's live C–V sweeps derived from impedance sweeps, newest first."""
    return (
        Sweep.objects.filter(
            unit=unit, kind=SweepKind.CV, archived=False, derived_from__isnull=False
        )
        .distinct()
        .select_related("current_fit")
        .order_by("-uploaded_at", "-id")
    )


def q_at_frequency(unit: Unit, frequency_hz: float) -> dict | None:
    """Q [1] and Ceff [F] of ``unit`` at ``frequency_hz`` [Hz] against bias, from its newest
    impedance fits (one per bias, dark 25 °C first); None without impedance data covering f.

    Returns
    -------
    dict or None
        ``bias_v`` (list, V), ``q`` (list), ``capacitance_f`` (list, F), ``frequency_hz``.
    """
    groups = impedance_groups(unit)
    if not groups:
        return None
    key = ("dark", 25.0) if ("dark", 25.0) in groups else max(groups, key=lambda k: len(groups[k]))
    sweeps, _ = _one_per_bias(groups[key])
    rows = []
    for s in sweeps:
        fit = current_impedance_fit(s)
        if fit is None or not (fit.frequency_min_hz <= frequency_hz <= fit.frequency_max_hz):
            continue
        phys = fit.as_physics()
        rows.append((s.bias_min_v, phys.q_at([frequency_hz])[0], phys.ceff_at([frequency_hz])[0]))
    if not rows:
        return None
    b, q, c = (list(col) for col in zip(*rows, strict=True))
    return {"frequency_hz": frequency_hz, "bias_v": b, "q": q, "capacitance_f": c}
