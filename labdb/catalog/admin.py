"""Admin pages for curating parts, lots and units (deletion is protected; archive instead)."""

from django.contrib import admin

from labdb.accounts.admin_base import CuratorAdmin, CuratorTabularInline
from labdb.catalog.models import Lot, Part, Unit


@admin.action(description="Archive selected")
def archive(modeladmin, request, queryset):
    # Row by row, not queryset.update(): each save writes its audit event.
    for obj in queryset.filter(archived=False):
        obj.archived = True
        obj.save(update_fields=["archived"])


class LotInline(CuratorTabularInline):
    model = Lot
    extra = 0
    fields = ["code", "date_code", "received_on", "source", "archived"]
    show_change_link = True


@admin.register(Part)
class PartAdmin(CuratorAdmin):
    list_display = ["part_number", "kind", "manufacturer", "rated_reverse_v", "archived"]
    list_filter = ["kind", "archived"]
    search_fields = ["part_number", "description", "manufacturer"]
    inlines = [LotInline]
    actions = [archive]
    fieldsets = [
        (
            None,
            {
                "fields": [
                    "part_number",
                    "kind",
                    "description",
                    "manufacturer",
                    "rated_reverse_v",
                    "archived",
                ]
            },
        ),
        (
            "Reference bias window (V, reverse positive)",
            {"fields": ["ref_bias_low_v", "ref_bias_high_v"]},
        ),
        (
            "Spec limits (optional)",
            {
                "fields": [
                    "spec_bias_v",
                    "spec_c_min_f",
                    "spec_c_max_f",
                    "spec_min_swing",
                    "shift_tolerance",
                ]
            },
        ),
    ]


class UnitInline(CuratorTabularInline):
    model = Unit
    extra = 0
    fields = ["label", "notes", "archived"]
    show_change_link = True


@admin.register(Lot)
class LotAdmin(CuratorAdmin):
    list_display = ["code", "part", "received_on", "date_code", "source", "archived"]
    list_filter = ["part", "archived"]
    search_fields = ["code", "part__part_number", "date_code"]
    inlines = [UnitInline]
    actions = [archive]


@admin.register(Unit)
class UnitAdmin(CuratorAdmin):
    list_display = ["label", "lot", "archived"]
    list_filter = ["lot__part", "archived"]
    search_fields = ["label", "lot__code", "lot__part__part_number"]
    actions = [archive]
