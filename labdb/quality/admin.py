"""Admin pages for lot summaries (read-only) and flags."""

from django.contrib import admin

from labdb.accounts.admin_base import CuratorAdmin
from labdb.quality.models import Flag, LotSummary


@admin.register(LotSummary)
class LotSummaryAdmin(CuratorAdmin):
    list_display = [
        "lot",
        "illumination",
        "temperature_c",
        "n_units",
        "cjo_med",
        "swing_med",
        "computed_at",
    ]
    list_filter = ["illumination", "lot__part"]

    def has_change_permission(self, request, obj=None):
        return False

    def has_add_permission(self, request):
        return False


@admin.register(Flag)
class FlagAdmin(CuratorAdmin):
    list_display = ["rule", "figure", "part", "lot", "unit", "state", "active", "updated_at"]
    list_filter = ["state", "active", "rule", "part"]
    readonly_fields = [
        "part",
        "lot",
        "unit",
        "rule",
        "figure",
        "condition",
        "summary",
        "evidence",
        "active",
        "reviewed_by",
        "reviewed_at",
        # Reviews go through the flags page, which records who, when and why.
        "state",
        "note",
    ]

    def has_add_permission(self, request):
        return False
