"""Numerical core of labdb: junction models, fitting, oscillator fixtures, tuning, profiles.

Pure numpy/scipy, SI units, no Django. The public names are re-exported here.
"""

from labdb.physics.batch import fit_junction_batch
from labdb.physics.errors import PhysicsInputError
from labdb.physics.fitting import FITTER_VERSION, JunctionFit, fit_junction
from labdb.physics.junction import (
    MODEL_PARAMS,
    MODELS,
    capacitance_of,
    junction_capacitance,
    junction_capacitance_many,
    params_of,
)
from labdb.physics.oscillator import (
    OscillatorCalibration,
    calibrate_oscillator,
    capacitance_from_frequency,
    relative_capacitance,
)
from labdb.physics.profile import MottSchottkyResult, mott_schottky
from labdb.physics.tuning import (
    BandCoverage,
    band_coverage,
    bias_for_frequency,
    capacitance_ratio,
    coupled,
    fixed_capacitance_to_centre,
    tank_capacitance,
    tank_frequency,
    tuning_slope,
)

__all__ = [
    "FITTER_VERSION",
    "MODELS",
    "MODEL_PARAMS",
    "BandCoverage",
    "JunctionFit",
    "MottSchottkyResult",
    "OscillatorCalibration",
    "PhysicsInputError",
    "band_coverage",
    "bias_for_frequency",
    "calibrate_oscillator",
    "capacitance_from_frequency",
    "capacitance_of",
    "capacitance_ratio",
    "coupled",
    "fit_junction",
    "fit_junction_batch",
    "fixed_capacitance_to_centre",
    "junction_capacitance",
    "junction_capacitance_many",
    "mott_schottky",
    "params_of",
    "relative_capacitance",
    "tank_capacitance",
    "tank_frequency",
    "tuning_slope",
]
