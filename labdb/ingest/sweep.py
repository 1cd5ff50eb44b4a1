"""Parsed sweep and calibration records, and the rules every sweep passes through.

Bias sign rule (reverse bias is positive in labdb):

* all bias values ≤ 0 with some < 0: the file uses diode voltage; the values are negated
  and a note says so (``bias_negated`` is True);
* both signs: kept as is when the positive points outnumber the negative ones and no
  point lies below −:data:`FORWARD_LIMIT_V` (a few small forward-bias points); otherwise
  refused, since the sign convention cannot be told;
* rows out of bias order are sorted (stable, so repeated bias values keep file order) and
  repeated bias values are kept; both get a note.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from labdb.ingest.errors import IssueList, ParseError
from labdb.ingest.metadata import empty_metadata

#: most negative bias (V) accepted as a forward-bias point in a reverse-bias sweep
FORWARD_LIMIT_V = 1.0
#: fewest points a sweep may have
MIN_POINTS = 3


@dataclass
class ParsedSweep:
    """One bias sweep read from a file or an array payload.

    Attributes
    ----------
    source : str
        File or archive member name.
    kind : str
        ``"cv"`` (capacitance readings) or ``"fv"`` (oscillator frequency readings).
    bias_v : ndarray, shape (n,)
        Reverse bias in V, positive, sorted ascending.
    capacitance_f : ndarray, shape (n,) or None
        Capacitance in F (``kind == "cv"``).
    frequency_hz : ndarray, shape (n,) or None
        Oscillator frequency in Hz (``kind == "fv"``).
    extras : dict of str to ndarray, shape (n,)
        Other readings in SI: ``conductance_s`` (S), ``q``, ``d`` (plain), ``esr_ohm`` (ohm).
    metadata : dict
        Normalised metadata (see :mod:`labdb.ingest.metadata`).
    unit_label : str or None
        Unit (device) label of a wide-file column.
    notes : list of str
        What was changed or ignored on the way (sorting, sign, unused columns).
    bias_negated : bool
        True when the file gave diode voltage (negative) and it was negated.
    columns : dict of str to str
        Role (``bias``, ``capacitance``, ``frequency``, ``conductance``, ``q``, ``d``,
        ``esr``) to the header as written.
    lines : list of int or None
        Original 1-based line (or array index + 1) of each point, in sorted order.
    """

    source: str
    kind: str
    bias_v: np.ndarray
    capacitance_f: np.ndarray | None
    frequency_hz: np.ndarray | None
    extras: dict[str, np.ndarray] = field(default_factory=dict)
    metadata: dict[str, Any] = field(default_factory=empty_metadata)
    unit_label: str | None = None
    notes: list[str] = field(default_factory=list)
    bias_negated: bool = False
    columns: dict[str, str] = field(default_factory=dict)
    lines: list[int] | None = None


@dataclass
class ParsedCalibration:
    """Reference readings of an oscillator fixture.

    Attributes
    ----------
    ref_capacitance_f : ndarray, shape (n,)
        Reference capacitance in F (0 for the open fixture), in file order.
    freq_hz : ndarray, shape (n,)
        Oscillator frequency in Hz with that reference fitted.
    metadata : dict
        Normalised metadata (fixture, measured_at, operator, temperature_c, ...).
    source : str
        File name.
    columns : dict of str to str
        ``reference`` and ``frequency`` to the headers as written.
    lines : list of int
        Original line of each reading.
    """

    ref_capacitance_f: np.ndarray
    freq_hz: np.ndarray
    metadata: dict[str, Any] = field(default_factory=empty_metadata)
    source: str = ""
    columns: dict[str, str] = field(default_factory=dict)
    lines: list[int] = field(default_factory=list)


@dataclass
class BiasPlan:
    """Result of the sign and order rules, shared by every reading of one bias column."""

    bias_v: np.ndarray
    order: np.ndarray
    negated: bool
    notes: list[str]


def plan_bias(
    bias: list[float], lines: list[int], issues: IssueList, column: str
) -> BiasPlan | None:
    """Apply the sign and order rules; None (with an issue) for an unreadable sign mix."""
    b = np.asarray(bias, dtype=float)
    notes: list[str] = []
    neg, pos = int(np.sum(b < 0)), int(np.sum(b > 0))
    negated = False
    if neg and not pos:
        b = -b + 0.0  # + 0.0 turns -0.0 into 0.0
        negated = True
        notes.append("bias was given as negative (diode) voltage; negated to reverse bias")
    elif neg and pos:
        low = float(b.min())
        if pos <= neg or low < -FORWARD_LIMIT_V:
            first = next(i for i, v in enumerate(bias) if v < 0)
            issues.add(
                f"bias has both signs ({neg} points below 0 V, down to {low:g} V, and {pos} "
                "above): give reverse bias as positive numbers, or every point as negative "
                f"diode voltage (a few forward points down to -{FORWARD_LIMIT_V:g} V are "
                "allowed in a positive sweep)",
                line=lines[first],
                column=column,
            )
            return None
        notes.append(f"{neg} forward-bias points (down to {low:g} V) kept as negative bias")
    order = np.argsort(b, kind="stable")
    if np.any(np.diff(b) < 0):
        notes.append("points sorted by increasing bias (the file was not in bias order)")
    b = b[order]
    repeats = int(np.sum(np.diff(b) == 0))
    if repeats:
        notes.append(f"{repeats} repeated bias values kept")
    return BiasPlan(b, order, negated, notes)


def make_sweep(
    source: str,
    kind: str,
    plan: BiasPlan,
    reading: list[float],
    extras: dict[str, list[float]],
    lines: list[int],
    metadata: dict[str, Any],
) -> ParsedSweep:
    """Assemble a sweep in bias order from checked values."""
    o = plan.order
    r = np.asarray(reading, dtype=float)[o]
    return ParsedSweep(
        source=source,
        kind=kind,
        bias_v=plan.bias_v.copy(),
        capacitance_f=r if kind == "cv" else None,
        frequency_hz=r if kind == "fv" else None,
        extras={k: np.asarray(v, dtype=float)[o] for k, v in extras.items()},
        metadata={**metadata, "other": dict(metadata.get("other") or {})},
        notes=list(plan.notes),
        bias_negated=plan.negated,
        lines=[lines[i] for i in o],
    )


def too_few(n: int, file: str, what: str = "data rows") -> ParseError | None:
    """An error when a sweep has fewer than :data:`MIN_POINTS` points."""
    if n == 0:
        return ParseError.at(file, f"no {what}: a sweep needs at least {MIN_POINTS} points")
    if n < MIN_POINTS:
        return ParseError.at(file, f"only {n} {what}; a sweep needs at least {MIN_POINTS}")
    return None
