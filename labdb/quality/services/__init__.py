"""Quality of lots over time: lot summaries, lot models, flags and their review.

Pages, the API, the ``recompute_quality`` command and the measurements hook call these
functions; nothing else writes LotSummary or Flag rows.
"""

from labdb.quality.services.conditions import (
    TEMPERATURE_BAND_C,
    ReferenceWindow,
    condition_key,
    condition_label,
    parse_condition,
    reference_window,
    temperature_band,
)
from labdb.quality.services.effects import condition_effects, temperature_coefficient
from labdb.quality.services.flags import is_material, review_flag
from labdb.quality.services.partsettings import PartSettings, check_settings, update_part_settings
from labdb.quality.services.recompute import (
    QUALITY_VERSION,
    RecomputeReport,
    lot_order,
    recompute_lots,
    recompute_part,
)
from labdb.quality.services.reports import compare_lots, lot_overview, part_overview
from labdb.quality.services.rules import FIGURE_LABELS, RULES

__all__ = [
    "FIGURE_LABELS",
    "QUALITY_VERSION",
    "RULES",
    "TEMPERATURE_BAND_C",
    "PartSettings",
    "RecomputeReport",
    "ReferenceWindow",
    "check_settings",
    "compare_lots",
    "condition_effects",
    "condition_key",
    "condition_label",
    "is_material",
    "lot_order",
    "lot_overview",
    "parse_condition",
    "part_overview",
    "recompute_lots",
    "recompute_part",
    "reference_window",
    "review_flag",
    "temperature_band",
    "temperature_coefficient",
    "update_part_settings",
]
