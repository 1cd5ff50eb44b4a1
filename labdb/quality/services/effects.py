"""Condition effects: the same unit dark and illuminated (ΔC/C), or at several temperatures (TC)."""

from __future__ import annotations

from collections import defaultdict

import numpy as np

from labdb.physics import junction_capacitance_many

#: Points of the bias grid effect curves are given on.
N_EFFECT_GRID = 41

#: Fewest temperature bands for a temperature coefficient.
MIN_TEMPERATURES = 2


def _unit_sweeps(summaries) -> dict:
    """unit → {(illumination, band): [sweep entries]}, plus labels, from stored summaries."""
    out: dict = defaultdict(lambda: defaultdict(list))
    labels = {}
    for s in summaries:
        for u in s.figures.get("units", []):
            labels[u["unit"]] = u["label"]
            out[u["unit"]][(s.illumination, s.temperature_c)].extend(u["sweeps"])
    return out, labels


def _params(sweeps: list[dict]) -> np.ndarray:
    return np.array([[s["cjo"], s["vj"], s["m"], s["cp"]] for s in sweeps], dtype=float)


def _median_curve(sweeps: list[dict], grid: np.ndarray) -> np.ndarray:
    return np.median(junction_capacitance_many(grid, *_params(sweeps).T), axis=0)


def _span(sweeps: list[dict]) -> tuple[float, float]:
    return min(s["bias_min_v"] for s in sweeps), max(s["bias_max_v"] for s in sweeps)


def condition_effects(summaries) -> dict:
    """ΔC/C against bias for each illumination against dark, and TC against bias.

    Parameters
    ----------
    summaries : iterable of LotSummary
        All summaries of one lot (one per condition set).

    Returns
    -------
    dict
        ``{"light": [...], "temperature": [...]}``. Each light entry compares one
        illumination with dark in one temperature band: ``grid_v`` [V], per unit
        ``dcc`` = C_lit/C_dark − 1 [1] on the grid, and the lot's pointwise median. Each
        temperature entry, for one illumination: per unit ``tc_ppm`` [ppm/°C] on the grid,
        where TC = (dC/dT)/C(T_ref)·10⁶, dC/dT the least-squares slope of C over the
        unit's sweep temperatures and T_ref the lowest of them (for two temperatures,
        (C₂ − C₁)/(C₁·(T₂ − T₁)), the usual capacitor TC; common practice, no source).
        Curves are the units' fitted models, taken only where every sweep involved was
        measured (no extrapolation).
    """
    units, labels = _unit_sweeps(summaries)
    light: dict = defaultdict(list)
    temps: dict = defaultdict(list)
    for unit, by_cond in units.items():
        for (illum, band), sweeps in by_cond.items():
            dark = by_cond.get(("dark", band))
            if illum != "dark" and dark:
                light[(illum, band)].append((unit, dark, sweeps))
        by_illum: dict = defaultdict(list)
        for (illum, _band), sweeps in by_cond.items():
            by_illum[illum].extend(sweeps)
        for illum, sweeps in by_illum.items():
            if len({s["temperature_c"] for s in sweeps}) >= MIN_TEMPERATURES:
                temps[illum].append((unit, sweeps))
    out = {"light": [], "temperature": []}
    for (illum, band), members in sorted(light.items()):
        lo = max(max(_span(d)[0], _span(s)[0]) for _, d, s in members)
        hi = min(min(_span(d)[1], _span(s)[1]) for _, d, s in members)
        if not hi > lo:
            continue
        grid = np.linspace(lo, hi, N_EFFECT_GRID)
        rows = [
            {
                "unit": u,
                "label": labels[u],
                "dcc": (_median_curve(s, grid) / _median_curve(d, grid) - 1.0).tolist(),
            }
            for u, d, s in members
        ]
        out["light"].append(
            _entry(
                f"{illum} against dark, {band:g} °C band", grid, rows, "dcc", illum=illum, band=band
            )
        )
    for illum, members in sorted(temps.items()):
        lo = max(_span(s)[0] for _, s in members)
        hi = min(_span(s)[1] for _, s in members)
        if not hi > lo:
            continue
        grid = np.linspace(lo, hi, N_EFFECT_GRID)
        rows = []
        for u, sweeps in members:
            t = np.array([s["temperature_c"] for s in sweeps], dtype=float)
            c = junction_capacitance_many(grid, *_params(sweeps).T)
            rows.append(
                {
                    "unit": u,
                    "label": labels[u],
                    "temperatures_c": sorted(set(t.tolist())),
                    "tc_ppm": temperature_coefficient(t, c).tolist(),
                }
            )
        out["temperature"].append(
            _entry(f"{illum}, temperature coefficient", grid, rows, "tc_ppm", illum=illum)
        )
    return out


def _entry(title: str, grid: np.ndarray, rows: list[dict], key: str, **extra) -> dict:
    rows.sort(key=lambda r: r["label"])
    curves = np.array([r[key] for r in rows], dtype=float)
    return dict(
        extra,
        title=title,
        grid_v=grid.tolist(),
        units=rows,
        lot_median=np.median(curves, axis=0).tolist(),
        quantity=key,
    )


def temperature_coefficient(temperature_c: np.ndarray, capacitance_f: np.ndarray) -> np.ndarray:
    """TC = (dC/dT)/C(T_ref)·10⁶ [ppm/°C] at each bias, from sweeps at several temperatures.

    Parameters
    ----------
    temperature_c : ndarray, shape (k,)
        Temperature of each sweep [°C]; at least two distinct values.
    capacitance_f : ndarray, shape (k, n)
        Capacitance of each sweep at ``n`` common biases [F].

    Returns
    -------
    ndarray, shape (n,)
        Temperature coefficient [ppm/°C]; dC/dT is the least-squares slope of C over T and
        C(T_ref) the least-squares line at the lowest temperature.
    """
    t = np.asarray(temperature_c, dtype=float)
    c = np.asarray(capacitance_f, dtype=float)
    dt = t - t.mean()
    slope = (dt @ (c - c.mean(axis=0))) / (dt @ dt)
    c_ref = c.mean(axis=0) + slope * (t.min() - t.mean())
    return slope / c_ref * 1e6
