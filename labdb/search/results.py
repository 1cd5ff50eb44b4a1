"""What search and the tank finder answer: plain frozen dataclasses, SI units throughout."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

from labdb.physics import BandCoverage
from labdb.search.queries import SearchQuery, TankQuery


@dataclass(frozen=True)
class LotFigures:
    """One lot summary as a query sees it.

    Attributes
    ----------
    params : dict
        Median-unit junction parameters: cjo [F], vj [V], m, cp [F].
    c1_f, c2_f : float
        Median-unit capacitance at the window's ends [F].
    swing : float
        C(v1)/C(v2) of the median unit [dimensionless].
    bias_min_v, bias_max_v : float
        Common measured bias range of the lot's units [V].
    extrapolated : bool
        The window reaches beyond that range (the model is extrapolated there).
    """

    lot_id: int
    code: str
    received_on: dt.date | None
    temperature_c: float
    n_units: int
    params: dict[str, float]
    c1_f: float
    c2_f: float
    swing: float
    bias_min_v: float
    bias_max_v: float
    extrapolated: bool


@dataclass(frozen=True)
class UnitSpread:
    """The unit fits behind a part's counted lots, over the same window.

    ``n_meeting`` counts units whose own swing reaches the query's minimum (None without
    one); ``worst`` names the unit with the smallest swing ("lot L2 unit U07").
    """

    n_units: int
    n_meeting: int | None
    worst: str
    worst_swing: float | None

    @property
    def fraction_meeting(self) -> float | None:
        if self.n_meeting is None or self.n_units == 0:
            return None
        return self.n_meeting / self.n_units


@dataclass(frozen=True)
class PartHit:
    """One part in the search results.

    Swing figures are C(v1)/C(v2) of lot-median units: ``swing_median`` is the median over
    the counted lots, ``swing_worst`` the smallest (lot ``worst_lot``). ``c1_f``/``c2_f`` are
    medians over the counted lots [F]. ``v1_v``/``v2_v`` is the window used [V].
    """

    part_id: int
    part_number: str
    kind: str
    description: str
    rated_reverse_v: float | None
    v1_v: float
    v2_v: float
    swing_median: float
    swing_worst: float
    worst_lot: str
    c1_f: float
    c2_f: float
    n_lots: int
    n_units: int
    open_flags: int
    latest_received: dt.date | None
    lots: tuple[LotFigures, ...]
    units: UnitSpread
    n_left_out: int
    warnings: tuple[str, ...] = ()

    @property
    def n_extrapolated(self) -> int:
        return sum(1 for lot in self.lots if lot.extrapolated)


@dataclass(frozen=True)
class SearchPage:
    """One page of ranked parts, the total count, and page-level warnings."""

    query: SearchQuery
    hits: tuple[PartHit, ...]
    total: int
    page: int
    n_pages: int
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True)
class TankLot:
    """One lot of a tank candidate.

    ``coverage`` is :func:`labdb.physics.band_coverage` of the lot-median unit (frequency
    range [Hz] over the bias range, biases [V] at the band edges, slope [Hz/V] at the band
    centre). ``n_covering`` of ``n_units`` unit fits cover the band; ``worst`` names the unit
    with the least margin, ``worst_f_hz`` is its (f at bias_min, f at bias_max) [Hz] and
    ``worst_margin`` its margin. A margin is min(f_low/f(bias_min), f(bias_max)/f_high)
    [dimensionless]: ≥ 1 covers the band; ``margin`` is the median unit's.
    """

    lot_id: int
    code: str
    received_on: dt.date | None
    params: dict[str, float]
    coverage: BandCoverage
    margin: float
    n_units: int
    n_covering: int
    worst: str
    worst_f_hz: tuple[float, float] | None
    worst_margin: float | None
    extrapolated: bool


@dataclass(frozen=True)
class TankCandidate:
    """A shortlisted part: its counted lots, worst first, and the spread over its units."""

    part_id: int
    part_number: str
    kind: str
    rated_reverse_v: float | None
    lots: tuple[TankLot, ...]
    worst_margin: float
    warnings: tuple[str, ...] = ()

    @property
    def n_lots_covering(self) -> int:
        return sum(1 for lot in self.lots if lot.coverage.covers)

    @property
    def n_units(self) -> int:
        return sum(lot.n_units for lot in self.lots)

    @property
    def n_units_covering(self) -> int:
        return sum(lot.n_covering for lot in self.lots)

    @property
    def worst_unit(self) -> TankLot | None:
        """The lot holding the unit with the least margin (its ``worst`` names the unit)."""
        with_units = [lot for lot in self.lots if lot.worst_margin is not None]
        return min(with_units, key=lambda lot: lot.worst_margin, default=None)


@dataclass(frozen=True)
class Suggestion:
    """Fixed capacitance [F] that centres the band for one lot, or why there is none."""

    part_number: str
    lot_code: str
    fixed_f: float | None
    reason: str


@dataclass(frozen=True)
class TankResult:
    """The tank finder's answer.

    ``n_parts`` parts with ``n_lots`` counted lots were judged; ``n_parts_covering`` of them
    cover the band with the median unit of every counted lot. ``refusal`` explains, in plain
    words, why no lot at all covers; it is empty otherwise.
    """

    query: TankQuery
    candidates: tuple[TankCandidate, ...]
    n_parts: int
    n_lots: int
    n_parts_covering: int
    suggestion: Suggestion | None
    refusal: str = ""
    warnings: tuple[str, ...] = field(default_factory=tuple)
