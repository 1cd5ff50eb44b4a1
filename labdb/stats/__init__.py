"""Statistics for lot quality: robust outliers, control charts, rank tests, capability.

Pure numpy/scipy, no Django. Units are those of the values passed in; results say which.
"""

from labdb.stats.capability import CapabilityResult, cpk
from labdb.stats.compare import RankTest, holm, rank_shift, shifted_figures
from labdb.stats.control import (
    D2_MR,
    D4_MR,
    E2_INDIVIDUALS,
    ControlLimits,
    PointVerdict,
    RuleHit,
    evaluate_sequence,
    individuals_limits,
    western_electric,
)
from labdb.stats.errors import StatsInputError
from labdb.stats.robust import (
    DEFAULT_OUTLIER_THRESHOLD,
    MAD_QUANTILE,
    MAD_TO_SIGMA,
    MEANAD_TO_SIGMA,
    curve_distance,
    modified_zscores,
    outliers,
    pointwise_band,
    robust_center_spread,
)

__all__ = [
    "D2_MR",
    "D4_MR",
    "DEFAULT_OUTLIER_THRESHOLD",
    "E2_INDIVIDUALS",
    "MAD_QUANTILE",
    "MAD_TO_SIGMA",
    "MEANAD_TO_SIGMA",
    "CapabilityResult",
    "ControlLimits",
    "PointVerdict",
    "RankTest",
    "RuleHit",
    "StatsInputError",
    "cpk",
    "curve_distance",
    "evaluate_sequence",
    "holm",
    "individuals_limits",
    "modified_zscores",
    "outliers",
    "pointwise_band",
    "rank_shift",
    "robust_center_spread",
    "shifted_figures",
    "western_electric",
]
