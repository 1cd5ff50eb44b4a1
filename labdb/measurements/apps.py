"""App config for measurements: fixtures, calibrations, sweeps and fits."""

from django.apps import AppConfig


class MeasurementsConfig(AppConfig):
    name = "labdb.measurements"
    label = "measurements"
