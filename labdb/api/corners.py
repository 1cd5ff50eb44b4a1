"""Lot models for SPICE: the typical model and the 10th/90th-percentile corners of a lot.

The quality layer keeps, per lot and condition, a summary with the pointwise band of the
units' fitted curves (``band``: ``bias_v`` and the ``p10``/``p50``/``p90`` capacitance
curves) and a lot-model fit. A corner is the junction model fitted to its percentile curve.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from labdb.api.errors import Conflict
from labdb.catalog.models import Lot
from labdb.measurements.models import Fit
from labdb.physics import FITTER_VERSION, PhysicsInputError, fit_junction
from labdb.quality.models import LotSummary

CORNERS = ("typ", "low", "high")

#: Which band curve each corner follows: low = 10th percentile of C, high = 90th.
CORNER_CURVES = {"typ": "p50", "low": "p10", "high": "p90"}

#: Ambient bench temperature [°C]: the summary chosen when the caller names none.
DEFAULT_TEMPERATURE_C = 25.0


@dataclass
class LotCorner:
    """Parameters (SI) of one corner model and where they came from."""

    corner: str
    params: dict[str, float]
    model: str
    source: str
    fitter_version: str
    bias_range_v: tuple[float, float]
    fit: Fit | None = None


def select_summary(
    lot: Lot, illumination: str | None = None, temperature_c: float | None = None
) -> LotSummary:
    """The lot's summary for a condition (dark and nearest 25 °C unless asked); 409 if none."""
    summaries = list(lot.summaries.all())
    if not summaries:
        raise Conflict(
            f"lot {lot.pk} has no summary yet: it is computed once the lot's units have "
            "fitted sweeps; try again after the recomputation"
        )
    wanted = illumination or "dark"
    matching = [s for s in summaries if s.illumination == wanted]
    if not matching and illumination is None:
        matching = summaries
    if not matching:
        have = sorted({f"{s.illumination} at {s.temperature_c:g} °C" for s in summaries})
        raise Conflict(f"lot {lot.pk} has no summary for illumination '{wanted}'; it has {have}")
    target = DEFAULT_TEMPERATURE_C if temperature_c is None else temperature_c
    return min(matching, key=lambda s: (abs(s.temperature_c - target), s.pk))


def lot_fit(summary: LotSummary) -> Fit | None:
    """The current (newest) lot-model fit of a summary, or None."""
    return summary.fits.order_by("-version").first()


def _band_curve(summary: LotSummary, key: str) -> tuple[np.ndarray, np.ndarray]:
    band = summary.band or {}
    if "bias_v" not in band or key not in band:
        raise Conflict(
            f"the summary of lot {summary.lot_id} holds no percentile band ('{key}') yet"
        )
    try:
        bias = np.asarray(band["bias_v"], dtype=float)
        cap = np.asarray(band[key], dtype=float)
    except (TypeError, ValueError):
        raise Conflict(f"the band of lot {summary.lot_id} is not numeric") from None
    if bias.shape != cap.shape or bias.ndim != 1:
        raise Conflict(f"the band of lot {summary.lot_id} has curves of different lengths")
    keep = np.isfinite(bias) & np.isfinite(cap)
    return bias[keep], cap[keep]


def lot_corner(summary: LotSummary, corner: str) -> LotCorner:
    """The model of one corner: the lot-model fit for ``typ`` when there is one, else a fit
    of the junction model to the corner's percentile curve."""
    if corner not in CORNERS:
        raise ValueError(f"corner {corner!r}: use one of {CORNERS}")
    current = lot_fit(summary)
    if corner == "typ" and current is not None:
        return LotCorner(
            corner,
            dict(current.params),
            current.model,
            f"lot-model fit {current.pk}, version {current.version}",
            current.fitter_version,
            (current.bias_min_v, current.bias_max_v),
            current,
        )
    key = CORNER_CURVES[corner]
    bias, cap = _band_curve(summary, key)
    model = current.model if current is not None else "auto"
    try:
        result = fit_junction(bias, cap, model=model)
    except PhysicsInputError as exc:
        raise Conflict(f"the {key} curve of lot {summary.lot_id} cannot be fitted: {exc}") from None
    percent = key[1:]
    return LotCorner(
        corner,
        dict(result.params),
        result.model,
        f"junction model fitted to the lot's {percent}th-percentile C(V) curve",
        FITTER_VERSION,
        (result.bias_min_v, result.bias_max_v),
    )
