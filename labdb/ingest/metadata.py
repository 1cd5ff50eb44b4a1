"""Sweep metadata: loose key matching, value normalisation and merging with outer values.

Keys match whatever their case, spaces, underscores, hyphens or dots (``Measured at``,
``measured_at`` and ``MeasuredAt`` are one key); the aliases are in :data:`KEY_ALIASES`.
Unknown keys are kept as strings under ``"other"``.

Normalised values:

* ``temperature_c`` float in °C, from ``25 °C``, ``25 C``, ``25 degC``, ``298.15 K``,
  ``77 °F`` or a bare ``25`` (°C).
* ``illumination`` one of ``dark``, ``ambient``, ``illuminated`` (see :func:`illumination`).
* ``measured_at`` timezone-aware datetime from ISO 8601. A date alone means midnight; a
  value without a zone is taken as **UTC** (the bench clock's zone is unknown to us).
* ``test_frequency_hz`` in Hz (``1 MHz``) and ``test_level_v`` in V (``50 mV``, ``50 mVrms``).
* ``kind`` ``cv``, ``fv`` or ``zf``; the other keys are stripped strings.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from datetime import UTC, date, datetime
from functools import lru_cache
from typing import Any

from labdb.ingest.errors import Issue
from labdb.ingest.units import parse_number, parse_quantity

FIELDS = (
    "part",
    "lot",
    "unit",
    "fixture",
    "temperature_c",
    "illumination",
    "measured_at",
    "operator",
    "kind",
    "test_frequency_hz",
    "test_level_v",
    "notes",
)

KEY_ALIASES = {
    "part": ("part", "partnumber", "partno", "pn", "parttype"),
    "lot": ("lot", "lotcode", "lotno", "batch", "datecode"),
    "unit": ("unit", "unitlabel", "unitid", "dut", "sample", "serial", "serialno"),
    "fixture": ("fixture", "setup", "jig", "fixturename"),
    "temperature_c": ("temperature", "temp", "temperaturec", "tempc", "ambienttemperature"),
    "illumination": ("illumination", "light", "lighting", "illuminated"),
    "measured_at": (
        "measuredat",
        "measuredon",
        "measured",
        "date",
        "datetime",
        "timestamp",
        "measurementdate",
    ),
    "operator": ("operator", "measuredby", "technician", "user", "by"),
    "kind": ("kind", "sweepkind", "sweeptype"),
    "test_frequency_hz": ("testfrequency", "testfreq", "testfrequencyhz", "ftest", "measfreq"),
    "test_level_v": ("testlevel", "testlevelv", "testsignal", "oscillatorlevel", "aclevel"),
    "notes": ("notes", "note", "comment", "comments", "remarks"),
}
#: keys that steer how a wide file is read; they are consumed, not stored as metadata
DIRECTIVE_ALIASES = {
    "reading_unit": ("unitofreadings", "readingsunit", "readingunit", "readingunits"),
    "quantity": ("quantity", "readings", "quantityofreadings"),
}

_LOOKUP = {alias: field for field, aliases in KEY_ALIASES.items() for alias in aliases}
_DIRECTIVES = {alias: d for d, aliases in DIRECTIVE_ALIASES.items() for alias in aliases}


_SQUASH = re.compile(r"[\s_\-.]+")


@lru_cache(maxsize=4096)
def squash_key(key: str) -> str:
    """Lower-case a key and drop spaces, underscores, hyphens and dots."""
    # Cached: a bulk import asks the same few header and key names thousands of times.
    return _SQUASH.sub("", key.strip().lower())


def field_for(key: str) -> str | None:
    """The metadata field a raw key names, or None for an unknown key."""
    return _LOOKUP.get(squash_key(key))


def directive_for(key: str) -> str | None:
    """``"reading_unit"`` or ``"quantity"`` when the key steers wide-file reading."""
    return _DIRECTIVES.get(squash_key(key))


def empty_metadata() -> dict[str, Any]:
    """A metadata dict with every field present and unset."""
    meta: dict[str, Any] = dict.fromkeys(FIELDS)
    meta["other"] = {}
    return meta


_TEMP_UNITS = {
    "": "C",
    "c": "C",
    "°c": "C",
    "ºc": "C",
    "degc": "C",
    "deg": "C",
    "celsius": "C",
    "°": "C",
    "k": "K",
    "kelvin": "K",
    "°f": "F",
    "degf": "F",
    "fahrenheit": "F",
}


def temperature_c(text: str, decimal_comma: bool = False) -> float:
    """Temperature in °C from ``25 °C``, ``25 C``, ``25``, ``298.15 K`` or ``77 °F``."""
    s = str(text).strip()
    m = re.match(r"^([+\-\u2212]?[\d.,]+(?:[eE][+-]?\d+)?)\s*(.*)$", s)
    scale = _TEMP_UNITS.get(m.group(2).strip().lower().replace(" ", "")) if m else None
    if not m or scale is None:
        raise ValueError(f"'{s}' is not a temperature (write e.g. '25 °C')")
    try:
        value, _ = parse_number(m.group(1), decimal_comma)
    except ValueError:
        raise ValueError(f"'{s}' is not a temperature (write e.g. '25 °C')") from None
    if scale == "K":
        value -= 273.15
    elif scale == "F":
        value = (value - 32.0) * 5.0 / 9.0
    if not -273.15 <= value <= 1000.0:
        raise ValueError(f"'{s}' is not a plausible temperature")
    return value


_DARK = {"dark", "off", "none", "unlit", "covered", "shielded", "shaded", "no"}
_AMBIENT = {"ambient", "room", "lab", "normal"}
_LIT = {"lit", "on", "light", "illuminated", "illumination", "bright", "lamp", "led", "sun"}


def illumination(text: str) -> str:
    """Normalise an illumination word to ``dark``, ``ambient`` or ``illuminated``.

    Darkness words win (``light off`` is dark), then room/ambient words (``room light`` is
    ambient), then lit words (``led on``, ``lit``, ``illuminated``).
    """
    words = set(re.findall(r"[a-z]+", str(text).lower()))
    if words & _DARK:
        return "dark"
    if words & _AMBIENT:
        return "ambient"
    if words & _LIT:
        return "illuminated"
    raise ValueError(
        f"'{str(text).strip()}' is not a known illumination (use dark, ambient or illuminated)"
    )


def measured_at(value: str | datetime | date) -> datetime:
    """An aware datetime from ISO 8601 text (naive means UTC, a date means midnight)."""
    if isinstance(value, datetime):
        dt = value
    elif isinstance(value, date):
        dt = datetime(value.year, value.month, value.day)
    else:
        s = str(value).strip()
        try:
            dt = datetime.fromisoformat(s)
        except ValueError:
            raise ValueError(
                f"'{s}' is not an ISO 8601 date or datetime (e.g. 2024-05-01 or 2024-05-01T14:30)"
            ) from None
    return dt.replace(tzinfo=UTC) if dt.tzinfo is None else dt


def sweep_kind(text: str) -> str:
    """``cv``, ``fv`` or ``zf`` from ``cv``, ``C–V``, ``f-V``, ``capacitance``, ``frequency``,
    ``zf``, ``Z–f`` or ``impedance`` (an impedance sweep over test frequency at one bias)."""
    s = re.sub(r"[^a-z]", "", str(text).lower())
    if s in ("cv", "capacitance", "capacitancesweep"):
        return "cv"
    if s in ("fv", "frequency", "frequencysweep"):
        return "fv"
    if s in ("zf", "impedance", "impedancesweep"):
        return "zf"
    raise ValueError(f"'{str(text).strip()}' is not a sweep kind (use cv, fv or zf)")


def _clean(field: str, value: Any, decimal_comma: bool) -> Any:
    if field == "temperature_c":
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            return temperature_c(repr(float(value)))
        return temperature_c(value, decimal_comma)
    if field == "illumination":
        return illumination(value)
    if field == "measured_at":
        return measured_at(value)
    if field == "kind":
        return sweep_kind(value)
    if field == "test_frequency_hz":
        return parse_quantity(value, "Hz", decimal_comma)
    if field == "test_level_v":
        return parse_quantity(value, "V", decimal_comma)
    return str(value).strip()


def normalize_metadata(
    raw: Mapping[str, Any],
    file: str = "",
    lines: Mapping[str, int] | None = None,
    decimal_comma: bool = False,
) -> tuple[dict[str, Any], list[Issue]]:
    """Turn raw ``key -> value`` pairs into a metadata dict with SI, typed values.

    Parameters
    ----------
    raw : mapping of str to str (or already typed values)
        Keys as written; empty values are ignored.
    file : str
        Name used in the issues.
    lines : mapping of str to int, optional
        1-based line of each raw key, for located messages.
    decimal_comma : bool
        Accept ``23,5 °C`` (the file uses decimal commas).

    Returns
    -------
    meta : dict
        Every field of :data:`FIELDS` (None if not given) plus ``other`` (dict of str).
    issues : list of Issue
        One per value that could not be read; the field is left None.
    """
    meta = empty_metadata()
    issues: list[Issue] = []
    lines = lines or {}
    for key, value in raw.items():
        if value is None or (isinstance(value, str) and not value.strip()):
            continue
        field = field_for(key)
        if field is None:
            meta["other"][key.strip()] = str(value).strip()
            continue
        try:
            meta[field] = _clean(field, value, decimal_comma)
        except ValueError as exc:
            issues.append(Issue(file, lines.get(key), None, f"metadata '{key.strip()}': {exc}"))
    return meta, issues


def _same(a: Any, b: Any) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return abs(a - b) <= 1e-9 * max(1.0, abs(a), abs(b))
    if isinstance(a, str) and isinstance(b, str):
        return a.strip().casefold() == b.strip().casefold()
    return a == b


def _show(field: str, value: Any) -> str:
    if isinstance(value, datetime):
        return value.isoformat()
    if field == "temperature_c":
        return f"{value:g} °C"
    if field == "test_frequency_hz":
        return f"{value:g} Hz"
    if field == "test_level_v":
        return f"{value:g} V"
    return f"'{value}'"


def merge_metadata(
    file_meta: Mapping[str, Any], outer_meta: Mapping[str, Any]
) -> tuple[dict[str, Any], list[str]]:
    """Combine metadata from a file with outer values (upload form or manifest row).

    Outer values win. Every field where both sides give a value and they disagree is
    reported in plain words. Both inputs are normalised dicts (as from
    :func:`normalize_metadata`); None or missing outer values leave the file's value.
    Strings that differ only in letter case are not reported as a conflict.

    Returns
    -------
    merged : dict
        Every field plus ``other``.
    conflicts : list of str
        E.g. ``"lot: the file says 'L7' but 'L8' was given; using 'L8'"``.
    """
    merged = empty_metadata()
    for field in FIELDS:
        merged[field] = file_meta.get(field)
    merged["other"] = dict(file_meta.get("other") or {})
    conflicts: list[str] = []
    for field in FIELDS:
        outer = outer_meta.get(field)
        if outer is None or (isinstance(outer, str) and not outer.strip()):
            continue
        inner = merged[field]
        if inner is not None and not _same(inner, outer):
            conflicts.append(
                f"{field}: the file says {_show(field, inner)} but {_show(field, outer)} "
                f"was given; using {_show(field, outer)}"
            )
        merged[field] = outer
    for key, outer in (outer_meta.get("other") or {}).items():
        inner = merged["other"].get(key)
        if inner is not None and not _same(str(inner), str(outer)):
            conflicts.append(
                f"{key}: the file says '{inner}' but '{outer}' was given; using '{outer}'"
            )
        merged["other"][key] = outer
    return merged, conflicts
