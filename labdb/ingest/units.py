"""Unit spellings, header unit splitting and number parsing for bench files.

Every value leaves this module in SI: F, V, Hz, S (siemens), ohm, or a plain number for
Q and D. Unit matching is exact first; a case-blind match is used only when it cannot be
read two ways (``mhz`` is MHz, since no bench sweeps in millihertz; ``MOHM`` is refused
because milliohm and megaohm differ only by case). ``mF`` is deliberately unknown: old
paperwork writes "MF"/"mfd" for microfarad, and a varactor is never millifarads.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

MICRO_SIGNS = ("u", "\u00b5", "\u03bc")  # ASCII u, MICRO SIGN, GREEK SMALL LETTER MU
OHM_WORDS = ("ohm", "ohms", "Ohm", "Ohms", "\u03a9", "\u2126")  # GREEK OMEGA, OHM SIGN

_PREFIX = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "m": 1e-3, "": 1.0, "k": 1e3, "M": 1e6, "G": 1e9}
for _mu in MICRO_SIGNS:
    _PREFIX[_mu] = 1e-6

#: base symbol -> prefixes a bench file may use with it
_ALLOWED = {
    "F": ("", "f", "p", "n") + MICRO_SIGNS,
    "V": ("", "m", "k") + MICRO_SIGNS,
    "Hz": ("", "k", "M", "G"),
    "S": ("", "m", "n") + MICRO_SIGNS,
}
_OHM_PREFIXES = ("", "m", "k", "M")

#: SI base symbol of each dimension, as used in messages and ``parse_quantity``.
BASE = {"F": "F", "V": "V", "Hz": "Hz", "S": "S", "ohm": "ohm", "1": ""}
_EXAMPLES = {"Hz": "1 MHz", "V": "50 mV", "F": "12.5 pF", "S": "2 uS", "ohm": "0.5 ohm"}
DIMENSION_NAMES = {
    "F": "capacitance",
    "V": "voltage",
    "Hz": "frequency",
    "S": "conductance",
    "ohm": "resistance",
    "1": "plain number",
}


@dataclass(frozen=True)
class Unit:
    """A parsed unit: what the file wrote, its dimension and its factor to SI."""

    text: str
    dim: str  # one of the keys of BASE
    scale: float

    def same_as(self, other: Unit) -> bool:
        """True when both units give the same SI value for the same number."""
        return self.dim == other.dim and math.isclose(self.scale, other.scale, rel_tol=1e-12)


def _build_table() -> dict[str, tuple[str, float]]:
    table: dict[str, tuple[str, float]] = {}
    for base, prefixes in _ALLOWED.items():
        for p in prefixes:
            table[p + base] = (base, _PREFIX[p])
    for p in _OHM_PREFIXES:
        for word in OHM_WORDS:
            table[p + word] = ("ohm", _PREFIX[p])
    table["%"] = ("1", 0.01)
    return table


_EXACT = _build_table()
_FOLDED: dict[str, tuple[str, float] | None] = {}
for _key, _val in _EXACT.items():
    _low = _key.lower()
    _prev = _FOLDED.get(_low, _val)
    _FOLDED[_low] = _val if _prev == _val else None  # None marks a case-ambiguous spelling


def parse_unit(text: str) -> Unit | None:
    """Read a unit spelling such as ``pF``, ``µF``, ``MHz``, ``uS``, ``kΩ`` or ``%``.

    Returns None when the text is not a unit we know.
    """
    key = text.strip().replace(" ", "")
    hit = _EXACT.get(key)
    if hit is None and key:
        hit = _FOLDED.get(key.lower())
    if hit is None:
        return None
    return Unit(text.strip(), hit[0], hit[1])


def base_unit(dim: str) -> Unit:
    """The SI unit of a dimension (scale 1)."""
    return Unit(BASE[dim], dim, 1.0)


_BRACKETED = re.compile(r"^(?P<name>.*?)\s*[\(\[\{](?P<unit>[^\(\)\[\]\{\}]*)[\)\]\}]\s*$")
_SUFFIXED = re.compile(r"^(?P<name>.*\S)\s*(?:[_/]|\s)\s*(?P<unit>[^\s_/]+)$")


def split_header(header: str) -> tuple[str, str | None]:
    """Split a column header into its name and the unit text written with it.

    ``C (pF)``, ``Freq [MHz]``, ``cap_pF``, ``Vr/V`` and ``bias V`` all carry a unit. A
    bracketed part is always taken as the unit text (even if it is not a known unit, so the
    caller can say so); an underscore, slash or space suffix only when it is a known unit,
    so ``V_R`` stays a name. A header that is only a prefixed unit (``pF``) has no name.

    Returns
    -------
    name : str
        The header without its unit, stripped.
    unit_text : str or None
        The unit as written, or None when the header has none.
    """
    text = header.strip()
    m = _BRACKETED.match(text)
    if m:
        unit = m.group("unit").strip()
        return m.group("name").strip(), (unit or None)
    m = _SUFFIXED.match(text)
    if m and parse_unit(m.group("unit")) is not None:
        return m.group("name").strip(), m.group("unit")
    if len(text) > 1 and parse_unit(text) is not None and text.lower() not in ("s", "f", "v"):
        return "", text
    return text, None


_NUMBER = re.compile(r"^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")
_SPACES = str.maketrans({"\u00a0": " ", "\u202f": " ", "\u2009": " ", "\u2212": "-"})


def parse_number(text: str, decimal_comma: bool = False) -> tuple[float, Unit | None]:
    """Read one numeric cell, with an optional unit written after the number.

    Parameters
    ----------
    text : str
        Cell text, e.g. ``"12.5"``, ``"1,25e-3"`` (decimal comma), ``"12 pF"``.
    decimal_comma : bool
        Accept a comma as the decimal separator (files separated by semicolons, tabs or
        spaces). Thousands separators are never accepted.

    Returns
    -------
    value : float
        The number as written (not yet scaled by the unit).
    unit : Unit or None
        The unit written in the cell, if any.

    Raises
    ------
    ValueError
        With a message fit to show the user (``'n/a' is not a number``).
    """
    raw = text.strip().translate(_SPACES).strip()
    if not raw:
        raise ValueError("empty cell where a number is needed")
    s = raw
    if decimal_comma and "," in s and "." not in s and s.count(",") == 1:
        s = s.replace(",", ".")
    m = _NUMBER.match(s)
    if not m:
        raise ValueError(f"'{text.strip()}' is not a number")
    rest = s[m.end() :].strip()
    unit = None
    if rest:
        unit = parse_unit(rest)
        if unit is None:
            raise ValueError(f"'{text.strip()}' is not a number")
    value = float(m.group(0))
    if not math.isfinite(value):
        raise ValueError(f"'{text.strip()}' is out of range for a number")
    return value, unit


def parse_quantity(text: str | float | int, unit: str, decimal_comma: bool = False) -> float:
    """Read a quantity like ``"1 MHz"`` or ``"50 mV"`` and return it in ``unit``.

    A bare number is taken to be in ``unit`` already. A trailing ``rms`` on a voltage is
    ignored (test levels are given as rms on every meter we know).

    Parameters
    ----------
    text : str or float
        The quantity as written.
    unit : str
        Unit of the result, e.g. ``"Hz"``, ``"V"``, ``"F"``, ``"pF"``.
    decimal_comma : bool
        Accept ``"1,5 MHz"``.

    Returns
    -------
    float
        The value in ``unit``.

    Raises
    ------
    ValueError
        Unknown target unit, unreadable text, wrong dimension or a non-finite result; the
        message names the text and is fit to show the user.
    """
    target = parse_unit(unit)
    if target is None:
        raise ValueError(f"unknown unit '{unit}'")
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise ValueError(f"{text!r} is not a quantity")
    if not isinstance(text, str):
        value = float(text)
        if not math.isfinite(value):
            raise ValueError(f"{text!r} is not a finite number")
        return value
    s = text.strip()
    if target.dim == "V" and s.lower().endswith("rms"):
        s = s[:-3].strip()
    try:
        number, written = parse_number(s, decimal_comma)
    except ValueError:
        example = _EXAMPLES.get(target.dim, f"12.5 {target.text}")
        raise ValueError(
            f"'{text.strip()}' is not a {DIMENSION_NAMES[target.dim]} (write e.g. '{example}')"
        ) from None
    if written is None:
        return number
    if written.dim != target.dim:
        raise ValueError(
            f"'{text.strip()}' is a {DIMENSION_NAMES[written.dim]}, "
            f"not a {DIMENSION_NAMES[target.dim]}"
        )
    value = number * written.scale / target.scale
    if not math.isfinite(value):
        raise ValueError(f"'{text.strip()}' is out of range")
    return value
