"""Sweeps given directly as arrays (a JSON payload), checked like a file's columns.

Messages use ``line`` = index + 1 and ``column`` = the field name, so an API can point at
``capacitance_f[13]`` as "line 14, column 'capacitance_f'".
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from numbers import Real
from typing import Any

import numpy as np

from labdb.ingest.errors import IssueList
from labdb.ingest.metadata import normalize_metadata
from labdb.ingest.sweep import MIN_POINTS, ParsedSweep, make_sweep, plan_bias

# Values in SI beyond these are almost surely sent in another unit (pF, MHz, mV).
_LIMITS = {
    "bias_v": (lambda v: abs(v) > 1e3, "volts", "mV"),
    "capacitance_f": (lambda v: v > 1e-3, "farads", "pF"),
    "frequency_hz": (lambda v: v < 1e3, "hertz", "MHz"),
}


def _values(name: str, data: Any, issues: IssueList, positive: bool) -> list[float] | None:
    if isinstance(data, np.ndarray):
        if data.ndim != 1:
            issues.add(f"must be a flat list of numbers, got shape {data.shape}", column=name)
            return None
        data = data.tolist()
    if isinstance(data, (str, bytes)) or not isinstance(data, Sequence):
        issues.add(f"must be a list of numbers, got {type(data).__name__}", column=name)
        return None
    before = issues.count()
    out: list[float] = []
    for i, item in enumerate(data):
        if isinstance(item, bool) or not isinstance(item, Real):
            issues.add(f"{item!r} is not a number", line=i + 1, column=name)
            continue
        try:
            value = float(item)
        except (OverflowError, ValueError):
            value = math.inf
        if not math.isfinite(value):
            issues.add(f"{item!r} is not a finite number", line=i + 1, column=name)
        elif positive and not value > 0:
            what = "capacitance" if name == "capacitance_f" else "frequency"
            issues.add(f"{value!r} is not a positive {what}", line=i + 1, column=name)
        else:
            out.append(value)
    if issues.count() > before:
        return None
    test, unit, other = _LIMITS[name]
    bad = next((i for i, v in enumerate(out) if test(v)), None)
    if bad is not None:
        issues.add(
            f"{out[bad]!r} is implausible in {unit}; send SI units (did you send {other}?)",
            line=bad + 1,
            column=name,
        )
        return None
    return out


def sweep_from_arrays(
    bias_v: Sequence[float] | np.ndarray,
    capacitance_f: Sequence[float] | np.ndarray | None = None,
    frequency_hz: Sequence[float] | np.ndarray | None = None,
    source: str = "json",
    metadata: Mapping[str, Any] | None = None,
) -> ParsedSweep:
    """Build a checked sweep from arrays of points.

    Parameters
    ----------
    bias_v : sequence of float, shape (n,)
        Bias in V; reverse bias positive (all-negative diode voltage is negated, with a
        note, as for files).
    capacitance_f : sequence of float, shape (n,), optional
        Capacitance in F, > 0. Give this or ``frequency_hz``.
    frequency_hz : sequence of float, shape (n,), optional
        Oscillator frequency in Hz, > 0.
    source : str
        Name used in messages and stored as the sweep's source.
    metadata : mapping, optional
        Raw metadata (same keys and spellings as in file headers).

    Returns
    -------
    ParsedSweep
        Sorted by bias; ``lines`` holds index + 1 of each point.

    Raises
    ------
    ParseError
        Missing or doubled reading arrays, length mismatch, non-numeric, non-finite or
        non-positive values, implausible magnitudes, fewer than three points.
    """
    issues = IssueList(source)
    meta, meta_issues = normalize_metadata(metadata or {}, source)
    issues.extend(meta_issues)
    if (capacitance_f is None) == (frequency_hz is None):
        issues.add("give either capacitance_f or frequency_hz (exactly one of them)")
        issues.raise_if_any()
    kind, name, data = (
        ("cv", "capacitance_f", capacitance_f)
        if capacitance_f is not None
        else ("fv", "frequency_hz", frequency_hz)
    )
    bias = _values("bias_v", bias_v, issues, positive=False)
    reading = _values(name, data, issues, positive=True)
    if bias is not None and reading is not None:
        if len(bias) != len(reading):
            issues.add(f"has {len(reading)} values but bias_v has {len(bias)}", column=name)
        elif len(bias) < MIN_POINTS:
            issues.add(f"only {len(bias)} points; a sweep needs at least {MIN_POINTS}")
    if meta.get("kind") not in (None, kind):
        issues.add(f"metadata says kind '{meta['kind']}' but {name} was given")
    issues.raise_if_any()
    lines = list(range(1, len(bias or []) + 1))
    plan = plan_bias(bias or [], lines, issues, "bias_v")
    issues.raise_if_any()
    meta["kind"] = kind
    sweep = make_sweep(source, kind, plan, reading or [], {}, lines, meta)
    sweep.columns = {"bias": "bias_v", "capacitance" if kind == "cv" else "frequency": name}
    return sweep
