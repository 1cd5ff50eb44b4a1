"""What a designer asks: the part search and the tank query, SI values, validated up front."""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass, fields

from labdb.catalog.models import PartKind
from labdb.measurements.models import Illumination
from labdb.search.errors import QueryProblem, SearchInputError

#: Which lots of a part count: its most recent measured lot, every lot, or lots received
#: on or after ``since``.
LOT_CHOICES: tuple[str, ...] = ("latest", "every", "since")
#: Result orders: worst-lot swing (largest first), capacitance at the chosen bias (largest or
#: smallest first), most recent lot first.
SEARCH_SORTS: tuple[str, ...] = ("swing", "cap_high", "cap_low", "recent")
MAX_PER_PAGE = 100


@dataclass(frozen=True)
class PartFilter:
    """Filters both queries share: which parts, lots and measurement conditions count.

    Attributes
    ----------
    kind : str
        Part kind (``PartKind`` value), "" for any.
    text : str
        Case-insensitive text looked for in the part number and the description.
    illumination : str
        Measurement illumination of the lot summaries (``Illumination`` value).
    temp_min_c, temp_max_c : float
        Temperature band [°C] the lot summaries' temperature must fall in.
    lots : str
        One of :data:`LOT_CHOICES`.
    since : datetime.date or None
        First receipt date counted when ``lots == "since"``.
    min_units : int
        Fewest units measured (summed over a part's counted lots) for a part to be listed.
    exclude_flagged : bool
        Leave out parts with an open, active flag.
    include_extrapolated : bool
        Keep lots whose measured bias range does not span the window (they are marked);
        by default they are left out and counted in the answer's warnings.
    """

    kind: str = ""
    text: str = ""
    illumination: str = Illumination.DARK
    temp_min_c: float = 20.0
    temp_max_c: float = 30.0
    lots: str = "every"
    since: dt.date | None = None
    min_units: int = 1
    exclude_flagged: bool = False
    include_extrapolated: bool = False

    def problems(self) -> list[QueryProblem]:
        out: list[QueryProblem] = []
        if self.kind and self.kind not in PartKind.values:
            out.append(_p("kind", f"unknown part kind {self.kind!r}; use one of {PartKind.values}"))
        if len(self.text) > 100:
            out.append(_p("text", "search text is limited to 100 characters"))
        if self.illumination not in Illumination.values:
            out.append(
                _p(
                    "illumination",
                    f"unknown illumination {self.illumination!r}; use one of {Illumination.values}",
                )
            )
        for name in ("temp_min_c", "temp_max_c"):
            t = getattr(self, name)
            if not _finite(t) or not -273.15 <= t <= 500:
                out.append(_p(name, f"temperature must be between −273.15 and 500 °C, got {t!r}"))
        if _finite(self.temp_min_c) and _finite(self.temp_max_c):
            if self.temp_min_c > self.temp_max_c:
                out.append(_p("temp_max_c", "the temperature band's upper end is below its lower"))
        if self.lots not in LOT_CHOICES:
            out.append(_p("lots", f"unknown lot choice {self.lots!r}; use one of {LOT_CHOICES}"))
        if self.lots == "since" and self.since is None:
            out.append(_p("since", "give the first receipt date when counting lots 'since'"))
        if not isinstance(self.min_units, int) or self.min_units < 1:
            out.append(_p("min_units", f"need a whole number ≥ 1, got {self.min_units!r}"))
        return out

    def validated(self):
        """Return self, or raise :class:`SearchInputError` listing every bad parameter."""
        problems = self.problems()
        if problems:
            raise SearchInputError(problems)
        return self


@dataclass(frozen=True)
class SearchQuery(PartFilter):
    """A part search: swing over a reverse-bias window and capacitance limits.

    Attributes (besides :class:`PartFilter`)
    ----------------------------------------
    v1_v, v2_v : float or None
        Bias window [V], reverse bias positive, 0 ≤ v1 < v2; both None for each part's own
        reference window (parts without one are then left out and counted).
    min_swing : float or None
        Smallest acceptable swing C(v1)/C(v2) [dimensionless] of the worst counted lot's
        median unit.
    c_at : str
        "v1" or "v2": the bias the capacitance limits and sort refer to.
    c_min_f, c_max_f : float or None
        Limits on the lot-median capacitance [F] at ``c_at``; every counted lot must meet them.
    sort : str
        One of :data:`SEARCH_SORTS`.
    page, per_page : int
        Page number (from 1) and page size (≤ :data:`MAX_PER_PAGE`).
    """

    v1_v: float | None = None
    v2_v: float | None = None
    min_swing: float | None = None
    c_at: str = "v1"
    c_min_f: float | None = None
    c_max_f: float | None = None
    sort: str = "swing"
    page: int = 1
    per_page: int = 25

    @property
    def own_window(self) -> bool:
        """True when each part is judged over its own reference window."""
        return self.v1_v is None and self.v2_v is None

    def problems(self) -> list[QueryProblem]:
        out = super().problems()
        if (self.v1_v is None) != (self.v2_v is None):
            missing = "v1_v" if self.v1_v is None else "v2_v"
            out.append(
                _p(
                    missing,
                    "give both ends of the bias window, or neither to use each "
                    "part's reference window",
                )
            )
        elif not self.own_window:
            out += _bias_window(self.v1_v, self.v2_v, "v1_v", "v2_v")
        if self.min_swing is not None and not (_finite(self.min_swing) and self.min_swing > 0):
            out.append(
                _p("min_swing", f"swing is a positive ratio C(V1)/C(V2), got {self.min_swing!r}")
            )
        if self.c_at not in ("v1", "v2"):
            out.append(_p("c_at", f"capacitance limits refer to 'v1' or 'v2', got {self.c_at!r}"))
        for name in ("c_min_f", "c_max_f"):
            c = getattr(self, name)
            if c is not None and not (_finite(c) and c > 0):
                out.append(_p(name, f"capacitance must be positive (F), got {c!r}"))
        if _finite(self.c_min_f) and _finite(self.c_max_f) and self.c_min_f > self.c_max_f:
            out.append(_p("c_max_f", "the capacitance range's upper limit is below its lower"))
        if self.sort not in SEARCH_SORTS:
            out.append(_p("sort", f"unknown order {self.sort!r}; use one of {SEARCH_SORTS}"))
        if not isinstance(self.page, int) or self.page < 1:
            out.append(_p("page", f"pages are numbered from 1, got {self.page!r}"))
        if not isinstance(self.per_page, int) or not 1 <= self.per_page <= MAX_PER_PAGE:
            out.append(
                _p("per_page", f"page size must be 1 to {MAX_PER_PAGE}, got {self.per_page!r}")
            )
        return out


@dataclass(frozen=True)
class TankQuery(PartFilter):
    """A tank to tune: L ∥ C_fixed ∥ (junction, optionally through Cc), a band, a bias supply.

    Attributes (besides :class:`PartFilter`)
    ----------------------------------------
    inductance_h : float
        Tank inductance L [H], > 0.
    fixed_f : float
        Fixed parallel capacitance (including strays) [F], ≥ 0.
    coupling_f : float or None
        Series coupling capacitor between tank and junction [F]; None for direct connection.
    f_low_hz, f_high_hz : float
        Band to cover [Hz], 0 < f_low < f_high.
    bias_min_v, bias_max_v : float
        Reverse bias available [V], 0 ≤ min < max.
    max_parts : int
        How many parts to shortlist and refine with their unit fits (1 to 50).
    """

    inductance_h: float = 0.0
    fixed_f: float = 0.0
    coupling_f: float | None = None
    f_low_hz: float = 0.0
    f_high_hz: float = 0.0
    bias_min_v: float = 0.0
    bias_max_v: float = 0.0
    max_parts: int = 6

    def problems(self) -> list[QueryProblem]:
        out = super().problems()
        if not (_finite(self.inductance_h) and self.inductance_h > 0):
            out.append(
                _p("inductance_h", f"inductance must be positive (H), got {self.inductance_h!r}")
            )
        if not (_finite(self.fixed_f) and self.fixed_f >= 0):
            out.append(_p("fixed_f", f"fixed capacitance must be ≥ 0 (F), got {self.fixed_f!r}"))
        if self.coupling_f is not None and not (_finite(self.coupling_f) and self.coupling_f > 0):
            out.append(
                _p(
                    "coupling_f",
                    f"coupling capacitor must be positive (F), or left out; "
                    f"got {self.coupling_f!r}",
                )
            )
        for name in ("f_low_hz", "f_high_hz"):
            f = getattr(self, name)
            if not (_finite(f) and f > 0):
                out.append(_p(name, f"frequency must be positive (Hz), got {f!r}"))
        if _finite(self.f_low_hz) and _finite(self.f_high_hz) and self.f_low_hz >= self.f_high_hz:
            out.append(_p("f_high_hz", "the band's upper edge must be above its lower edge"))
        out += _bias_window(self.bias_min_v, self.bias_max_v, "bias_min_v", "bias_max_v")
        if not isinstance(self.max_parts, int) or not 1 <= self.max_parts <= 50:
            out.append(_p("max_parts", f"shortlist 1 to 50 parts, got {self.max_parts!r}"))
        return out


def _p(field: str, message: str) -> QueryProblem:
    return QueryProblem(field, message)


def _finite(x) -> bool:
    return isinstance(x, int | float) and not isinstance(x, bool) and math.isfinite(x)


def _bias_window(lo, hi, lo_name: str, hi_name: str) -> list[QueryProblem]:
    out = []
    for name, v in ((lo_name, lo), (hi_name, hi)):
        if not _finite(v):
            out.append(_p(name, f"bias must be a finite number of volts, got {v!r}"))
        elif v < 0:
            out.append(
                _p(name, f"reverse bias is positive here; {v!r} V would forward-bias the junction")
            )
    if not out and lo >= hi:
        out.append(
            _p(hi_name, f"the window's upper end {hi!r} V must be above its lower end {lo!r} V")
        )
    return out


def field_names(query_type: type) -> list[str]:
    """Names of a query dataclass's attributes (for forms and API serializers)."""
    return [f.name for f in fields(query_type)]
