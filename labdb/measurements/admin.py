"""Admin pages for fixtures, calibrations, sweeps and fits (fits are read-only)."""

from django.contrib import admin

from labdb.accounts.admin_base import CuratorAdmin
from labdb.measurements.models import Calibration, Fit, Fixture, Sweep


@admin.register(Fixture)
class FixtureAdmin(CuratorAdmin):
    list_display = ["name", "kind", "test_frequency_hz", "nominal_inductance_h", "archived"]
    list_filter = ["kind", "archived"]
    search_fields = ["name", "description"]


@admin.register(Calibration)
class CalibrationAdmin(CuratorAdmin):
    list_display = ["fixture", "measured_at", "inductance_h", "stray_f"]
    list_filter = ["fixture"]
    readonly_fields = [
        "inductance_h",
        "stray_f",
        "covariance",
        "residuals",
        "created_by",
        "created_at",
    ]


@admin.register(Sweep)
class SweepAdmin(CuratorAdmin):
    list_display = [
        "id",
        "unit",
        "kind",
        "fixture",
        "illumination",
        "temperature_c",
        "measured_at",
        "archived",
    ]
    list_filter = ["kind", "illumination", "fixture", "archived"]
    search_fields = ["unit__label", "unit__lot__code", "unit__lot__part__part_number", "raw_name"]
    readonly_fields = [
        "raw_file",
        "raw_name",
        "raw_sha256",
        "raw_size",
        "points",
        "points_sha256",
        "n_points",
        "bias_min_v",
        "bias_max_v",
        "bias_negated",
        "current_fit",
        "uploaded_by",
        "uploaded_at",
        "calibration",
    ]
    exclude = []


@admin.register(Fit)
class FitAdmin(CuratorAdmin):
    list_display = [
        "id",
        "sweep",
        "lot_summary",
        "version",
        "model",
        "cjo",
        "vj",
        "m",
        "rms_rel",
        "created_at",
    ]
    list_filter = ["model", "origin", "fitter_version"]

    def has_change_permission(self, request, obj=None):
        return False

    def has_delete_permission(self, request, obj=None):
        return False

    def has_add_permission(self, request):
        return False
