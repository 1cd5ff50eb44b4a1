"""Names, wording and thresholds of the quality rules, and the proposal a rule makes."""

from __future__ import annotations

from dataclasses import dataclass, field

from django.conf import settings

#: Rule key → what it means, in words (the key is stored on Flag.rule).
RULES = {
    "unit_zscore": "unit stands out in its lot (modified z-score)",
    "unit_curve": "unit's C–V curve far from its lot's median curve",
    "unit_fit": "poor fit",
    "unit_monotonic": "capacitance rises with reverse bias",
    "unit_rating": "swept beyond the rated reverse voltage",
    "unit_spec": "unit outside the part's spec",
    "lot_chart": "lot median outside its control limits or a run rule",
    "lot_shift": "lot shifted against earlier lots (rank test)",
    "lot_cpk": "lot capability below target",
}

#: Figure key → label with unit, for summaries and pages.
FIGURE_LABELS = {
    "c_low": "C at the low reference bias",
    "c_high": "C at the high reference bias",
    "swing": "swing",
    "c_spec": "C at the spec bias",
    "distance": "curve distance",
    "rms_rel": "RMS relative residual",
    "max_rise": "largest rise",
    "bias_max_v": "highest bias",
    "cjo": "CJO",
    "vj": "VJ",
    "m": "M",
    "cp": "CP",
}

#: |modified z| above this marks a unit (Iglewicz & Hoaglin; NIST/SEMATECH §1.3.5.17).
Z_LIMIT = 3.5

#: A z-score outlier must also differ from its lot median by this fraction [1]: the best
#: bench C meters read to about 0.1 % (common practice, no source), so a smaller gap is no
#: finding however tight the lot (and a lot whose units agree to rounding has MAD ≈ 0).
MIN_RELATIVE_DEVIATION = 0.001

#: Family-wise significance level of the between-lot rank tests (Holm across figures).
SHIFT_ALPHA = 0.05

#: Fewest units of a lot, and of earlier lots together, for a rank test.
MIN_UNITS_SHIFT = 3

#: Fewest units for a lot to be judged between lots and to count in the baseline: a median
#: of one or two units is mostly that unit.
MIN_UNITS_LOT = 3

#: Fewest earlier lots before an individuals chart judges a lot (issue 5: at least 3).
MIN_BASELINE_LOTS = 3

#: An acknowledged flag reopens when its figure moves by more than this fraction of its
#: distance to the rule's limit, e.g. z from 8 to beyond 8 ± 1.125 (limit 3.5).
MATERIAL_FRACTION = 0.25


def max_rms_rel() -> float:
    """Largest RMS relative residual of an acceptable fit [1] (setting QUALITY_MAX_RMS_REL)."""
    return float(getattr(settings, "QUALITY_MAX_RMS_REL", 0.02))


def min_cpk() -> float:
    """Smallest acceptable Cpk of a lot [1] (setting QUALITY_MIN_CPK)."""
    return float(getattr(settings, "QUALITY_MIN_CPK", 1.33))


@dataclass
class Proposal:
    """A finding one rule makes on current data; the flag service turns it into a Flag row.

    ``value`` and ``limit`` (same unit) measure how far the finding is beyond its rule, and
    decide whether a change is material.
    """

    part_id: int
    lot_id: int | None
    unit_id: int | None
    rule: str
    figure: str
    condition: str
    summary: str
    evidence: dict = field(default_factory=dict)
    value: float | None = None
    limit: float | None = None

    @property
    def key(self) -> tuple:
        return (
            self.unit_id,
            self.lot_id if self.unit_id is None else None,
            self.rule,
            self.figure,
            self.condition,
        )
