"""Condition sets (illumination, temperature band) and a part's reference bias window."""

from __future__ import annotations

import math
from dataclasses import dataclass

#: Width of a temperature band [°C]. Sweeps are grouped by the nearest multiple of this, so
#: 23.4 °C and 26.9 °C share the 25 °C band; benches that hold "room temperature" within a few
#: degrees land together, while a deliberate second temperature (e.g. 45 °C) does not.
TEMPERATURE_BAND_C = 5.0


def temperature_band(temperature_c: float) -> float:
    """Centre of the temperature band of a sweep [°C].

    Parameters
    ----------
    temperature_c : float
        Sweep temperature [°C].

    Returns
    -------
    float
        The nearest multiple of :data:`TEMPERATURE_BAND_C` [°C]; halves round up
        (22.5 → 25), so the result does not depend on float rounding mode.
    """
    return TEMPERATURE_BAND_C * math.floor(temperature_c / TEMPERATURE_BAND_C + 0.5) + 0.0


def condition_key(illumination: str, band_c: float) -> str:
    """Short stable key of a condition set, e.g. ``"dark@25C"`` (stored on flags)."""
    return f"{illumination}@{band_c:g}C"


def condition_label(illumination: str, band_c: float) -> str:
    """The condition set in words for pages, e.g. ``"dark, 25 °C band"``."""
    return f"{illumination}, {band_c:g} °C band"


def parse_condition(key: str) -> tuple[str, float] | None:
    """Inverse of :func:`condition_key`; None when ``key`` is not one."""
    illumination, sep, rest = key.partition("@")
    if not sep or not rest.endswith("C"):
        return None
    try:
        return illumination, float(rest[:-1])
    except ValueError:
        return None


@dataclass(frozen=True)
class ReferenceWindow:
    """The bias window a part's figures are taken over.

    Attributes
    ----------
    low_v, high_v : float
        Ends of the window [V], reverse bias positive, low_v < high_v. C at low_v and at
        high_v are the reference capacitances; their ratio is the swing.
    source : str
        Where each end came from, in words (shown on the part page).
    """

    low_v: float
    high_v: float
    source: str


def reference_window(part, measured_min_v: float, measured_max_v: float) -> ReferenceWindow | None:
    """The part's reference window: its settings, else defaults from the measured range.

    Defaults (issue 5): the low end is 0 V, or the lowest measured bias when no sweep reaches
    0 V; the high end is the rated reverse voltage, but never beyond the highest measured bias
    (a model extrapolated past its data is not a measurement), and the highest measured bias
    when no rating is recorded.

    Parameters
    ----------
    part : Part
        Uses ``ref_bias_low_v``, ``ref_bias_high_v`` and ``rated_reverse_v`` [V].
    measured_min_v, measured_max_v : float
        Lowest and highest bias over the part's current fits [V].

    Returns
    -------
    ReferenceWindow or None
        None when no window with low < high can be formed.
    """
    notes = []
    low = part.ref_bias_low_v
    if low is None:
        low = 0.0 if measured_min_v <= 0.0 else float(measured_min_v)
        notes.append("low end: 0 V" if low == 0.0 else "low end: lowest measured bias")
    else:
        notes.append("low end: part setting")
    high = part.ref_bias_high_v
    if high is None:
        rated = part.rated_reverse_v
        if rated is not None and rated <= measured_max_v:
            high = float(rated)
            notes.append("high end: rated reverse voltage")
        else:
            high = float(measured_max_v)
            notes.append("high end: highest measured bias")
    else:
        notes.append("high end: part setting")
    if not low < high:
        return None
    return ReferenceWindow(float(low), float(high), "; ".join(notes))
