"""Q at the tank's band centre for shortlisted lots, from units measured as impedance sweeps."""

from __future__ import annotations

import math
from dataclasses import dataclass

from labdb.catalog.models import Unit
from labdb.measurements.models import SweepKind
from labdb.measurements.services.bias_series import q_at_frequency


@dataclass(frozen=True)
class LotQ:
    """Q [1] of a lot's impedance-measured units at one frequency, over the biases measured.

    ``q_min``/``q_max`` span every measured bias of every such unit; ``unit`` names the unit
    with the lowest Q (the lossiest), ``n_units`` how many units had impedance data there.
    """

    frequency_hz: float
    q_min: float
    q_max: float
    bias_min_v: float
    bias_max_v: float
    unit: str
    n_units: int


def lot_q_at(lot_ids: list[int], frequency_hz: float) -> dict[int, LotQ]:
    """For each lot with impedance data covering ``frequency_hz`` [Hz], its Q range."""
    units = (
        Unit.objects.filter(lot_id__in=lot_ids, sweeps__kind=SweepKind.ZF, sweeps__archived=False)
        .distinct()
        .order_by("lot_id", "label")
    )
    found: dict[int, list[tuple[str, dict]]] = {}
    for unit in units:
        q = q_at_frequency(unit, frequency_hz)
        if q and any(math.isfinite(v) for v in q["q"]):
            found.setdefault(unit.lot_id, []).append((unit.label, q))
    out = {}
    for lot_id, rows in found.items():
        pairs = [(v, label) for label, q in rows for v in q["q"] if math.isfinite(v)]
        biases = [b for _, q in rows for b in q["bias_v"]]
        low = min(pairs)
        out[lot_id] = LotQ(
            frequency_hz=frequency_hz,
            q_min=low[0],
            q_max=max(v for v, _ in pairs),
            bias_min_v=min(biases),
            bias_max_v=max(biases),
            unit=low[1],
            n_units=len(rows),
        )
    return out
