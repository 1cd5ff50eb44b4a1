"""Domain operations on sweeps, fits and calibrations.

Pages, the API, management commands and background jobs all call these functions; none of
them writes sweeps or fits any other way.
"""

from labdb.measurements.services.bulk import import_files
from labdb.measurements.services.calibration import (
    calibration_in_force,
    record_calibration,
)
from labdb.measurements.services.fits import (
    RefitSummary,
    fit_sweep,
    points_hash,
    refit_sweeps,
)
from labdb.measurements.services.record import (
    Outcome,
    SweepContext,
    import_archive,
    preview_file,
    record_file,
    record_points,
)

__all__ = [
    "Outcome",
    "RefitSummary",
    "SweepContext",
    "calibration_in_force",
    "fit_sweep",
    "import_archive",
    "import_files",
    "points_hash",
    "preview_file",
    "record_calibration",
    "record_file",
    "record_points",
    "refit_sweeps",
]
