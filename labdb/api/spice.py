"""SPICE ``.model`` cards from fitted junction parameters.

This is the one place where the sign of the bias changes: labdb's reverse bias V_R is
positive, a SPICE diode's voltage is Vd = −V_R (anode minus cathode). The card is a pure
function of the parameters and the header facts handed in.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from datetime import datetime

#: SPICE's forward-bias depletion coefficient; 0.5 is the simulators' default.
DEFAULT_FC = 0.5

#: ngspice clamps the diode grading coefficient to this value (it warns and uses 0.9).
NGSPICE_M_LIMIT = 0.9


@dataclass(frozen=True)
class CardSource:
    """Facts for the header comment of a card."""

    part: str
    lot: str | None
    unit: str | None
    fit: str  # e.g. "fit 12, version 3 of sweep 40" or "lot L7, 10th-percentile curve"
    fitter_version: str
    written_at: datetime


def spice_diode_voltage(reverse_bias_v: float) -> float:
    """SPICE diode voltage Vd [V] (anode − cathode) for a reverse bias V_R [V] (positive)."""
    return -float(reverse_bias_v)


def model_name(*labels: str | None) -> str:
    """A SPICE-safe model name from labels: letters, digits and ``_``, starting with a letter."""
    joined = "_".join(str(label) for label in labels if label not in (None, ""))
    clean = re.sub(r"[^A-Za-z0-9]+", "_", joined).strip("_").upper()
    if not clean or not clean[0].isalpha():
        clean = "D_" + clean
    return clean[:64].rstrip("_")


def _num(value: float) -> str:
    # Nine significant digits: far below any fit's uncertainty, so the card loses nothing.
    return f"{value:.9g}"


def _check(params: Mapping[str, float]) -> tuple[float, float, float, float]:
    try:
        cjo, vj, m = (float(params[k]) for k in ("cjo", "vj", "m"))
        cp = float(params.get("cp") or 0.0)
    except (KeyError, TypeError, ValueError):
        raise ValueError(
            f"params must hold numbers cjo, vj, m (and optionally cp): {params!r}"
        ) from None
    if not all(math.isfinite(x) for x in (cjo, vj, m, cp)) or min(cjo, vj, m) <= 0 or cp < 0:
        raise ValueError(
            f"params out of range: cjo={cjo!r} F, vj={vj!r} V, m={m!r}, cp={cp!r} F "
            "(need cjo, vj, m > 0 and cp ≥ 0, all finite)"
        )
    return cjo, vj, m, cp


def model_card(
    params: Mapping[str, float],
    *,
    name: str,
    source: CardSource,
    bias_range_v: tuple[float, float] | None = None,
    fc: float = DEFAULT_FC,
) -> str:
    """A SPICE diode ``.model`` card for a fitted junction.

    Parameters
    ----------
    params : mapping
        ``cjo`` [F], ``vj`` [V], ``m`` [dimensionless] and optionally ``cp`` [F] (package
        capacitance, written as a comment with a suggested parallel capacitor line).
    name : str
        Model name (see :func:`model_name`).
    source : CardSource
        Part, lot, unit, fit and fitter version, and the time written, for the header.
    bias_range_v : (float, float), optional
        Reverse-bias range [V] the fit covered (positive = reverse), stated in the header.
    fc : float, optional
        Forward-bias depletion coefficient FC [dimensionless], 0 ≤ FC < 1.

    Returns
    -------
    str
        The card, lines ending in ``\\n``: comments (``*``), one ``.model`` line.
    """
    if not 0 <= fc < 1:
        raise ValueError(f"fc={fc!r}: need 0 ≤ FC < 1")
    if not re.fullmatch(r"[A-Za-z][A-Za-z0-9_]*", name):
        raise ValueError(
            f"model name {name!r}: use letters, digits and '_', starting with a letter"
        )
    cjo, vj, m, cp = _check(params)
    where = " ".join(
        f"{label} {value}"
        for label, value in (("part", source.part), ("lot", source.lot), ("unit", source.unit))
        if value
    )
    lines = [
        f"* labdb junction model: {where}",
        f"* source: {source.fit}",
        f"* fitter version: {source.fitter_version}",
        f"* written: {source.written_at:%Y-%m-%d %H:%M %Z}".rstrip(),
        "* C(Vd) = CJO/(1 - Vd/VJ)^M with Vd = -V_R: connect the cathode to the positive side",
    ]
    if bias_range_v is not None:
        lo, hi = (float(v) for v in bias_range_v)
        lines.append(
            f"* fitted over reverse bias {lo:g} to {hi:g} V, i.e. diode voltage "
            f"{spice_diode_voltage(lo):g} to {spice_diode_voltage(hi):g} V"
        )
    if m > NGSPICE_M_LIMIT:
        lines += [
            f"* note: M = {_num(m)} exceeds {NGSPICE_M_LIMIT}; ngspice limits a diode's M to "
            f"{NGSPICE_M_LIMIT} (it warns and uses {NGSPICE_M_LIMIT}).",
            "* For the fitted curve in ngspice, use a voltage-dependent capacitor instead:",
            f"* C_{name} <cathode> <anode> C='{_num(cjo)}/(1+V(<cathode>,<anode>)/{_num(vj)})"
            f"^{_num(m)}'",
        ]
    lines.append(f".model {name} D(CJO={_num(cjo)} VJ={_num(vj)} M={_num(m)} FC={_num(fc)})")
    if cp > 0:
        lines += [
            f"* package capacitance CP = {_num(cp)} F is not part of the D model;",
            "* place it in parallel with the diode:",
            f"* CP_{name} <anode> <cathode> {_num(cp)}",
        ]
    return "\n".join(lines) + "\n"
