"""Reader for Touchstone version 1.x one-port files (``.s1p``): option line, comments, data.

The layout follows the Touchstone file format specification (version 1.1, the IBIS open
forum's public standard), as recalled from memory:

* ``!`` starts a comment, on a line of its own or after data; ``! key: value`` comment
  lines before the first data line are taken as labdb metadata (part, lot, unit, bias ...).
* The option line ``# <frequency unit> <parameter> <format> R <n>`` comes before the data;
  its items may be left out (the specification's defaults are ``GHz``, ``S``, ``MA``,
  ``R 50``) and letter case does not matter. Frequency units: ``Hz``, ``kHz``, ``MHz``,
  ``GHz``. Formats: ``RI`` (real, imaginary), ``MA`` (magnitude, angle in degrees) and
  ``DB`` (20·log10 magnitude, angle in degrees).
* A one-port data line holds the frequency and one pair: ``f  a  b``. Frequencies rise.

labdb reads only S-parameters of a one-port (S11). Y, Z, H and G parameters, two-port and
larger files, Touchstone 2.0 keywords (``[Version]`` ...), data before the option line,
a second option line, broken pairs and frequencies that do not rise are refused with the
file, line and, where it helps, the item at fault. The specification ignores option lines
after the first; we refuse them, since in practice they mark two files pasted together.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

import numpy as np

from labdb.ingest.delimited import decode, split_lines
from labdb.ingest.errors import IssueList, ParseError

#: Frequency unit words of the option line and their factor to Hz.
FREQ_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
#: Parameter letters a Touchstone 1.x file may name; only S is read here.
PARAMETERS = ("S", "Y", "Z", "H", "G")
#: Data formats of the option line.
FORMATS = ("RI", "MA", "DB")
#: The specification's defaults for items left out of the option line (from memory).
DEFAULTS = {"unit": "GHz", "parameter": "S", "format": "MA", "r": 50.0}
#: Extensions of Touchstone files (``.snp``: n ports).
_SNP = re.compile(r"\.s(\d+)p$", re.IGNORECASE)
_BANG_META = re.compile(r"^\s*!+\s*(?P<key>[^\W\d][\w .()/\-]{0,48}?)\s*[:=]\s*(?P<value>.*?)\s*$")
_NUMBER = re.compile(r"^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$")
_PARAM_NAMES = {
    "Y": "admittance (Y)",
    "Z": "impedance (Z)",
    "H": "hybrid (H)",
    "G": "inverse hybrid (G)",
}


@dataclass
class Touchstone:
    """A one-port Touchstone file as read (S11 still as S, not yet impedance).

    Attributes
    ----------
    file : str
        File name used in messages.
    frequency_hz : ndarray, shape (n,)
        Frequencies [Hz], strictly increasing.
    s11 : ndarray of complex, shape (n,)
        Reflection coefficient S11 [1].
    z0_ohm : float
        Reference impedance R of the option line [ohm].
    unit, parameter, format : str
        Option-line items in force (``"MHz"``, ``"S"``, ``"MA"``), defaults filled in.
    option_line : int or None
        1-based line of the option line.
    meta : dict of str to str
        ``! key: value`` pairs from before the first data line (keys as written).
    meta_lines : dict of str to int
        Line of each metadata key.
    lines : list of int
        Line of each data point.
    notes : list of str
        What was assumed on the way (defaults of the option line).
    """

    file: str
    frequency_hz: np.ndarray
    s11: np.ndarray
    z0_ohm: float
    unit: str
    parameter: str
    format: str
    option_line: int | None
    meta: dict[str, str] = field(default_factory=dict)
    meta_lines: dict[str, int] = field(default_factory=dict)
    lines: list[int] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)


def port_count(filename: str) -> int | None:
    """Ports named by a ``.s<n>p`` extension (``.s1p`` → 1), or None for other names."""
    m = _SNP.search(filename.strip())
    return int(m.group(1)) if m else None


def _options(text: str, line: int, issues: IssueList) -> dict | None:
    """Items of an option line (without ``#``); None when any item is wrong."""
    opts = dict(DEFAULTS)
    given: set[str] = set()
    tokens = text.split()
    before = issues.count()
    i = 0
    while i < len(tokens):
        tok = tokens[i]
        low = tok.lower()
        up = tok.upper()
        if low in FREQ_UNITS:
            slot, value = "unit", {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz"}[low]
        elif up in PARAMETERS:
            slot, value = "parameter", up
        elif up in FORMATS:
            slot, value = "format", up
        elif up == "R":
            slot = "r"
            nxt = tokens[i + 1] if i + 1 < len(tokens) else None
            value = _positive(nxt)
            if value is None:
                issues.add(
                    "option 'R' must be followed by the reference resistance in ohms, e.g. "
                    f"'R 50' (found {nxt or 'nothing'!r})",
                    line=line,
                    column=tok,
                )
            i += 1
        else:
            issues.add(
                f"option line item '{tok}' is not a frequency unit (Hz, kHz, MHz, GHz), "
                "parameter (S, Y, Z, H, G), format (RI, MA, DB) or 'R <ohms>'",
                line=line,
                column=tok,
            )
            i += 1
            continue
        if slot in given:
            issues.add(f"option line gives the {_SLOT_NAMES[slot]} twice", line=line, column=tok)
        given.add(slot)
        if value is not None:
            opts[slot] = value
        i += 1
    if issues.count() > before:
        return None
    opts["defaulted"] = [s for s in ("unit", "parameter", "format", "r") if s not in given]
    return opts


_SLOT_NAMES = {"unit": "frequency unit", "parameter": "parameter", "format": "format", "r": "R"}


def _positive(token: str | None) -> float | None:
    if token is None or not _NUMBER.match(token):
        return None
    value = float(token)
    return value if math.isfinite(value) and value > 0 else None


def _check_parameter(opts: dict, line: int, issues: IssueList) -> bool:
    if opts["parameter"] == "S":
        return True
    issues.add(
        f"this file holds {_PARAM_NAMES[opts['parameter']]} parameters; labdb reads one-port "
        "S-parameters only: export S11 (option line e.g. '# MHz S RI R 50')",
        line=line,
        column=opts["parameter"],
    )
    return False


def _pair(a: float, b: float, fmt: str) -> complex:
    if fmt == "RI":
        return complex(a, b)
    mag = a if fmt == "MA" else 10.0 ** (a / 20.0)
    ang = math.radians(b)
    return complex(mag * math.cos(ang), mag * math.sin(ang))


def read_touchstone(data: bytes, file: str) -> Touchstone:
    """Read a Touchstone 1.x one-port file.

    Parameters
    ----------
    data : bytes
        The file as uploaded.
    file : str
        Its name, used in every message; an extension other than ``.s1p`` naming more
        ports (``.s2p``) is refused before reading.

    Returns
    -------
    Touchstone
        Frequencies [Hz] and S11 [1] of every data line (one point or more).

    Raises
    ------
    ParseError
        With the line (and option item) of every problem found.
    """
    ports = port_count(file)
    if ports is not None and ports != 1:
        raise ParseError.at(
            file,
            f"a {ports}-port Touchstone file (.s{ports}p); labdb reads one-port files (.s1p) "
            "holding S11 of the unit",
        )
    lines = split_lines(decode(data, file))
    issues = IssueList(file)
    opts: dict | None = None
    option_line: int | None = None
    meta: dict[str, str] = {}
    meta_lines: dict[str, int] = {}
    freq: list[float] = []
    s11: list[complex] = []
    where: list[int] = []
    for n, raw in enumerate(lines, 1):
        body, _, comment = raw.partition("!")
        text = body.strip()
        if not text:
            m = _BANG_META.match("!" + comment) if comment and not freq else None
            if m and m.group("key").strip() not in meta:
                meta[m.group("key").strip()] = m.group("value")
                meta_lines[m.group("key").strip()] = n
            continue
        if text.startswith("["):
            keyword = text.split("]", 1)[0] + "]"
            issues.add(
                f"Touchstone 2.0 keyword '{keyword}': labdb reads version 1.x files (an "
                "option line and data only); save the file as Touchstone 1.1",
                line=n,
            )
            break
        if text.startswith("#"):
            if option_line is not None:
                issues.add(
                    f"a second option line (the first is on line {option_line}); one file "
                    "holds one sweep — were two files joined?",
                    line=n,
                )
                continue
            option_line = n
            opts = _options(text[1:], n, issues)
            if opts is not None and not _check_parameter(opts, n, issues):
                opts = None
            if opts is None:
                break
            continue
        if option_line is None:
            issues.add(
                "data before the option line: a Touchstone file states its units first, "
                "e.g. '# MHz S RI R 50'",
                line=n,
            )
            break
        _data_line(text, n, opts, issues, freq, s11, where)
    issues.raise_if_any()
    if option_line is None or opts is None:
        raise ParseError.at(file, "no option line ('# <unit> S <RI|MA|DB> R <ohms>') was found")
    if not freq:
        raise ParseError.at(file, "no data lines after the option line", line=option_line)
    notes = []
    if opts["defaulted"]:
        shown = ", ".join(
            f"{_SLOT_NAMES[s]} {opts[s] if s != 'r' else format(opts[s], 'g') + ' ohm'}"
            for s in opts["defaulted"]
        )
        notes.append(f"the option line leaves out items; the Touchstone defaults apply: {shown}")
    return Touchstone(
        file=file,
        frequency_hz=np.asarray(freq, dtype=float),
        s11=np.asarray(s11, dtype=complex),
        z0_ohm=float(opts["r"]),
        unit=opts["unit"],
        parameter=opts["parameter"],
        format=opts["format"],
        option_line=option_line,
        meta=meta,
        meta_lines=meta_lines,
        lines=where,
        notes=notes,
    )


def _data_line(text, n, opts, issues, freq, s11, where) -> None:
    """Check one data line and append its point (or record why not)."""
    tokens = text.split()
    values: list[float] = []
    for tok in tokens:
        if not _NUMBER.match(tok):
            issues.add(f"'{tok}' is not a number", line=n, column=tok)
            return
        values.append(float(tok))
    if any(not math.isfinite(v) for v in values):
        issues.add("a value is too large for a number", line=n)
        return
    count = len(values)
    if count == 9:
        issues.add(
            "9 values on a line: this is two-port data (frequency and four pairs); labdb "
            "reads one-port files (S11 only)",
            line=n,
        )
        return
    if count != 3:
        pairs = "an incomplete pair" if (count - 1) % 2 else f"{(count - 1) // 2} pairs"
        issues.add(
            f"{count} values on a line ({pairs}); a one-port data line holds 3: the "
            "frequency and one pair (S11)",
            line=n,
        )
        return
    f = values[0] * FREQ_UNITS[opts["unit"].lower()]
    if f <= 0:
        issues.add(f"frequency {tokens[0]} is not positive", line=n, column=tokens[0])
        return
    if freq and f <= freq[-1]:
        word = "repeats" if f == freq[-1] else "is lower than"
        issues.add(
            f"frequency {tokens[0]} {opts['unit']} {word} the one on line {where[-1]}; "
            "Touchstone frequencies must rise from line to line",
            line=n,
            column=tokens[0],
        )
        return
    if opts["format"] == "MA" and values[1] < 0:
        issues.add(f"magnitude {tokens[1]} is negative", line=n, column=tokens[1])
        return
    freq.append(f)
    s11.append(_pair(values[1], values[2], opts["format"]))
    where.append(n)
