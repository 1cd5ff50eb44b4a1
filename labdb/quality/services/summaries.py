"""Per-unit figures from current fits, and the lot summary of one lot and condition set.

A unit's figures come from the current fit of each of its sweeps in the condition set; a
unit with several sweeps there (e.g. meter and oscillator) takes the median of each figure,
and the pointwise median of its fitted curves. Everything here is numpy on plain rows; the
database work is in :mod:`labdb.quality.services.recompute`.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

import numpy as np

from labdb.physics import junction_capacitance_many
from labdb.quality.services.conditions import ReferenceWindow
from labdb.stats import (
    MAD_QUANTILE,
    MAD_TO_SIGMA,
    curve_distance,
    modified_zscores,
    pointwise_band,
    robust_center_spread,
)

#: Figures judged within a lot and between lots: C at both ends of the reference window and
#: the swing between them. CJO, VJ and M are summarised but not judged one by one: VJ and M
#: trade off against each other in a fit (and CJO against CP), so a unit can move far in
#: one of them while its curve, which is what a circuit sees, stays with its lot mates.
JUDGED = ("c_low", "c_high", "swing")

#: Everything summarised per lot: fit parameters, derived figures and fit quality.
SUMMARISED = ("cjo", "vj", "m", "cp", "c_low", "c_high", "swing", "c_spec", "rms_rel")

#: Figures stored per unit (the fit parameters are summarised per lot, not kept per unit:
#: each sweep entry holds its own).
UNIT_FIGURES = ("c_low", "c_high", "swing", "c_spec", "rms_rel")

_OLDEST = dt.datetime.min  # only compared with another undated sweep's

#: Points of the common bias grid the lot band and curve distances are evaluated on.
N_GRID = 41

#: Fewest units for z-scores within a lot: with fewer, the MAD rests on one or two values.
MIN_UNITS_Z = 5


@dataclass
class SweepRow:
    """One sweep and the figures of its current fit (SI units)."""

    sweep: int
    unit: int
    label: str
    lot: int
    illumination: str
    temperature_c: float
    bias_min_v: float
    bias_max_v: float
    fit: int
    model: str
    cjo: float
    vj: float
    m: float
    cp: float
    rms_rel: float
    converged: bool
    measured_at: dt.datetime | None = None
    max_rise: float = float("nan")
    noise: float = float("nan")


@dataclass
class LotFigures:
    """What is stored on a LotSummary row: its columns and its ``figures``/``band`` JSON."""

    columns: dict
    figures: dict
    band: dict
    grid: np.ndarray | None = None
    p50: np.ndarray | None = None
    unit_curves: dict = field(default_factory=dict)


def _f(x) -> float | None:
    """A JSON-safe float: NaN and ±inf become None."""
    if x is None:
        return None
    x = float(x)
    return x if np.isfinite(x) else None


def _column(values: np.ndarray) -> list:
    """Floats for JSON, NaN as None (tolist() is fast; the loop only runs when NaN is there)."""
    arr = np.asarray(values, dtype=float)
    return arr.tolist() if np.isfinite(arr).all() else [_f(v) for v in arr]


def _stats_rows(unit_fig: dict, distance: np.ndarray) -> dict:
    """Median, MAD-based σ and count of every summarised figure, one numpy pass.

    The same median and 1.4826·MAD (MAD/Φ⁻¹(0.75)) as ``stats.robust_center_spread``, taken
    row-wise over all figures at once; a figure with no finite value gets None.
    """
    names = list(SUMMARISED) + ["distance"]
    table = np.vstack([unit_fig[n] for n in SUMMARISED] + [distance])
    ok = np.isfinite(table)
    out = {}
    full = ok.all(axis=1)
    if full.any():
        rows = table[full]
        med = np.median(rows, axis=1)
        sigma = MAD_TO_SIGMA * np.median(np.abs(rows - med[:, None]), axis=1)
        for name, m, sg in zip(
            [n for n, f in zip(names, full, strict=True) if f], med, sigma, strict=True
        ):
            out[name] = {"median": float(m), "sigma": float(sg), "n": int(table.shape[1])}
    for name, f, row, good in zip(names, full, table, ok, strict=True):
        if not f:
            vals = row[good]
            if vals.size:
                m, sg = robust_center_spread(vals)
                out[name] = {"median": m, "sigma": sg, "n": int(vals.size)}
            else:
                out[name] = {"median": None, "sigma": None, "n": 0}
    return out


def summarize(
    rows: list[SweepRow],
    window: ReferenceWindow,
    spec_bias_v: float | None,
    context: dict,
) -> LotFigures:
    """Figures, statistics, band and z-scores of one lot in one condition set.

    Parameters
    ----------
    rows : list of SweepRow, length b ≥ 1
        The lot's sweeps in this condition set, each with its current fit and shape checks.
    window : ReferenceWindow
        Reference biases [V]: C at ``low_v`` and ``high_v``, swing = C(low)/C(high).
    spec_bias_v : float or None
        Bias of the part's capacitance spec [V]; adds the figure ``c_spec`` [F].
    context : dict
        The settings this summary was made under (stored with it, JSON-safe).

    Returns
    -------
    LotFigures
        ``band`` holds ``bias_v`` [V] and ``p10``, ``p50``, ``p90`` [F] on the common range.
    """
    rows = sorted(rows, key=lambda r: (r.label, r.unit, r.sweep))
    params = np.array([[r.cjo, r.vj, r.m, r.cp] for r in rows], dtype=float)
    biases = [window.low_v, window.high_v] + ([spec_bias_v] if spec_bias_v is not None else [])
    at = junction_capacitance_many(np.array(biases, dtype=float), *params.T)
    per_sweep = {
        "cjo": params[:, 0],
        "vj": params[:, 1],
        "m": params[:, 2],
        "cp": params[:, 3],
        "c_low": at[:, 0],
        "c_high": at[:, 1],
        "swing": at[:, 0] / at[:, 1],
        "c_spec": at[:, 2] if spec_bias_v is not None else np.full(len(rows), np.nan),
        "rms_rel": np.array([r.rms_rel for r in rows], dtype=float),
    }
    # Rows are sorted by unit, so each unit's sweeps are one contiguous block.
    unit_of = np.array([r.unit for r in rows])
    starts = np.flatnonzero(np.r_[True, unit_of[1:] != unit_of[:-1]])
    blocks = np.split(np.arange(len(rows)), starts[1:])
    unit_ids = [int(unit_of[b[0]]) for b in blocks]
    single = len(blocks) == len(rows)

    def per_unit(values: np.ndarray) -> np.ndarray:
        """Median over each unit's sweeps (the values themselves when one sweep each)."""
        return values if single else np.array([np.median(values[b], axis=0) for b in blocks])

    unit_fig = {name: per_unit(vals) for name, vals in per_sweep.items()}
    # A unit was measured over the union of its sweeps' ranges.
    lo_u = np.array([min(rows[i].bias_min_v for i in b) for b in blocks])
    hi_u = np.array([max(rows[i].bias_max_v for i in b) for b in blocks])
    common = (float(lo_u.max()), float(hi_u.min()))
    out = LotFigures(columns={}, figures={}, band={})
    distance = np.full(len(unit_ids), np.nan)
    if common[1] > common[0]:
        grid = np.linspace(common[0], common[1], N_GRID)
        curves = per_unit(junction_capacitance_many(grid, *params.T))
        p10, p50, p90 = _band(curves)
        distance = np.atleast_1d(curve_distance(curves, p50))
        out.band = {
            "bias_v": grid.tolist(),
            "p10": p10.tolist(),
            "p50": p50.tolist(),
            "p90": p90.tolist(),
        }
        out.grid, out.p50 = grid, p50
        out.unit_curves = dict(zip(unit_ids, curves, strict=True))
    n_units = len(unit_ids)
    zscores = {}
    if n_units >= MIN_UNITS_Z:
        for name in JUDGED:
            zscores[name] = modified_zscores(unit_fig[name])
        if np.isfinite(distance).all():
            zscores["distance"] = distance_zscores(distance)
    # Plain lists of Python floats (None for NaN) for JSON, built a column at a time.
    shown = {
        name: _column(unit_fig[name])
        for name in UNIT_FIGURES
        if name != "c_spec" or spec_bias_v is not None
    }
    zcols = {name: _column(z) for name, z in zscores.items()}
    dist = _column(distance)
    labels = [rows[b[0]].label for b in blocks]
    entries = [_sweep_entry(r) for r in rows]
    units = [
        {
            "unit": u,
            "label": labels[k],
            "figures": {name: col[k] for name, col in shown.items()},
            "distance": dist[k],
            "z": {name: col[k] for name, col in zcols.items()},
            "sweeps": [entries[i] for i in blocks[k]],
        }
        for k, u in enumerate(unit_ids)
    ]
    stats = _stats_rows(unit_fig, distance)
    out.figures = {
        "context": context,
        "window_v": [window.low_v, window.high_v],
        "window_source": window.source,
        "spec_bias_v": spec_bias_v,
        "common_v": list(common),
        "stats": stats,
        "units": units,
    }
    med = {name: stats[name]["median"] for name in SUMMARISED}
    out.columns = {
        "n_units": n_units,
        "n_sweeps": len(rows),
        "cjo_med": med["cjo"],
        "vj_med": med["vj"],
        "m_med": med["m"],
        "cp_med": med["cp"] or 0.0,
        "c_low_med_f": med["c_low"],
        "c_high_med_f": med["c_high"],
        "swing_med": med["swing"],
        "swing_min": _f(np.nanmin(unit_fig["swing"])),
        "bias_min_v": common[0],
        "bias_max_v": common[1],
        "unit_fits": [
            _newest_fit(unit_ids[k], labels[k], [rows[i] for i in b]) for k, b in enumerate(blocks)
        ],
    }
    return out


def _newest_fit(unit: int, label: str, rows: list[SweepRow]) -> list:
    """[unit id, label, CJO, VJ, M, CP] of the unit's most recent sweep in this condition set.

    A sweep without a measurement time is older than any with one; the later-stored sweep
    wins a tie. Search evaluates unit curves over its window from these.
    """
    newest = max(rows, key=lambda r: (r.measured_at is not None, r.measured_at or _OLDEST, r.sweep))
    return [unit, label, newest.cjo, newest.vj, newest.m, newest.cp]


def _band(curves: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """10 %, 50 % and 90 % pointwise; ``stats.pointwise_band`` when a curve has gaps.

    On a common range every curve is complete, and numpy's percentile (the same linear
    interpolation, Hyndman & Fan type 7) is ~50× faster than the NaN-aware path.
    """
    if np.isfinite(curves).all():
        p10, p50, p90 = np.percentile(curves, [10.0, 50.0, 90.0], axis=0)
        return p10, p50, p90
    return pointwise_band(curves, 10.0, 90.0)


def distance_zscores(distance: np.ndarray) -> np.ndarray:
    """Modified z-scores of curve distances: Φ⁻¹(0.75)·dᵢ/median(d).

    A curve distance is already an absolute deviation, from the lot's median curve, so the
    MAD of Iglewicz & Hoaglin's Mᵢ = 0.6745·|xᵢ − x̃|/MAD is the median distance itself.
    (Taking the MAD of the distances instead treats a one-sided, skewed quantity as if it
    were symmetric, and flags ordinary units about 2.8σ out.)
    """
    med = float(np.median(distance))
    if med == 0.0:
        return np.zeros_like(distance)
    return MAD_QUANTILE * distance / med


def _sweep_entry(r: SweepRow) -> dict:
    """A sweep's fit and shape checks as stored in the summary (reused by later runs)."""
    return {
        "sweep": r.sweep,
        "fit": r.fit,
        "cjo": r.cjo,
        "vj": r.vj,
        "m": r.m,
        "cp": r.cp,
        "rms_rel": r.rms_rel,
        "converged": r.converged,
        "bias_min_v": r.bias_min_v,
        "bias_max_v": r.bias_max_v,
        "temperature_c": r.temperature_c,
        "max_rise": _f(r.max_rise),
        "noise": _f(r.noise),
    }
