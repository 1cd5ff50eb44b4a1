"""Part search: the query parameters (the search page's, in SI units) and the ranked page."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import FiniteFloatField
from labdb.api.serializers.fits import FitParamsSerializer
from labdb.catalog.models import PartKind
from labdb.measurements.models import Illumination
from labdb.search.queries import LOT_CHOICES, MAX_PER_PAGE, SEARCH_SORTS, PartFilter, SearchQuery

#: Bounds that keep every number a physical one; the query itself checks the rest (signs,
#: order of window ends) and names the parameter it refuses.
MAX_BIAS_V = 1e4
MAX_CAPACITANCE_F = 1.0
MAX_COUNT = 1_000_000


def _float(help_text: str, **kw) -> FiniteFloatField:
    return FiniteFloatField(required=False, help_text=help_text, **kw)


class PartFilterParams(serializers.Serializer):
    """Filters the search and the tank finder share (``PartFilter``, same names)."""

    text = serializers.CharField(
        required=False,
        allow_blank=True,
        max_length=100,
        default=PartFilter.text,
        help_text="Text looked for in the part number and description (case-insensitive).",
    )
    kind = serializers.ChoiceField(
        choices=PartKind.choices, required=False, allow_blank=True, default=PartFilter.kind
    )
    illumination = serializers.ChoiceField(
        choices=Illumination.choices, required=False, default=PartFilter.illumination
    )
    temp_min_c = _float(
        "Temperature band's lower end [°C] (default 20).",
        min_value=-273.15,
        max_value=500,
        default=PartFilter.temp_min_c,
    )
    temp_max_c = _float(
        "Temperature band's upper end [°C] (default 30).",
        min_value=-273.15,
        max_value=500,
        default=PartFilter.temp_max_c,
    )
    lots = serializers.ChoiceField(
        choices=[(c, c) for c in LOT_CHOICES],
        required=False,
        default=PartFilter.lots,
        help_text="Lots that count: the latest measured, every lot, or those received since.",
    )
    since = serializers.DateField(
        required=False, allow_null=True, default=None, help_text="First receipt date (lots=since)."
    )
    min_units = serializers.IntegerField(
        required=False,
        min_value=1,
        max_value=MAX_COUNT,
        default=PartFilter.min_units,
        help_text="Fewest units measured over a part's counted lots.",
    )
    exclude_flagged = serializers.BooleanField(
        required=False, default=False, help_text="Leave out parts with an open, active flag."
    )
    include_extrapolated = serializers.BooleanField(
        required=False,
        default=False,
        help_text="Keep lots measured over a narrower bias range than asked (marked).",
    )


class SearchParams(PartFilterParams):
    """``SearchQuery`` in SI units; V1 and V2 both left out judge each part's own window."""

    v1_v = _float("Window start V1 [V], reverse bias.", max_value=MAX_BIAS_V, allow_null=True)
    v2_v = _float("Window end V2 [V], reverse bias.", max_value=MAX_BIAS_V, allow_null=True)
    min_swing = _float(
        "Smallest swing C(V1)/C(V2) of every counted lot's median unit.",
        max_value=1e6,
        allow_null=True,
    )
    c_at = serializers.ChoiceField(
        choices=[("v1", "v1"), ("v2", "v2")],
        required=False,
        default=SearchQuery.c_at,
        help_text="The bias the capacitance limits and sort refer to.",
    )
    c_min_f = _float(
        "Lowest lot-median capacitance at c_at [F].",
        max_value=MAX_CAPACITANCE_F,
        allow_null=True,
    )
    c_max_f = _float(
        "Highest lot-median capacitance at c_at [F].",
        max_value=MAX_CAPACITANCE_F,
        allow_null=True,
    )
    sort = serializers.ChoiceField(
        choices=[(s, s) for s in SEARCH_SORTS], required=False, default=SearchQuery.sort
    )
    page = serializers.IntegerField(
        required=False, min_value=1, max_value=MAX_COUNT, default=1, help_text="From 1."
    )
    per_page = serializers.IntegerField(
        required=False, min_value=1, max_value=MAX_PER_PAGE, default=SearchQuery.per_page
    )


class LotFiguresSerializer(serializers.Serializer):
    """One counted lot: its median unit's parameters and capacitances over the window."""

    lot = serializers.IntegerField(source="lot_id")
    code = serializers.CharField()
    received_on = serializers.DateField(allow_null=True)
    temperature_c = serializers.FloatField(help_text="[°C]")
    n_units = serializers.IntegerField()
    params = FitParamsSerializer(help_text="Median-unit junction parameters.")
    c1_f = serializers.FloatField(help_text="Median-unit C at V1 [F].")
    c2_f = serializers.FloatField(help_text="Median-unit C at V2 [F].")
    swing = serializers.FloatField(help_text="C(V1)/C(V2).")
    bias_min_v = serializers.FloatField(help_text="Common measured bias range, low end [V].")
    bias_max_v = serializers.FloatField(help_text="Common measured bias range, high end [V].")
    extrapolated = serializers.BooleanField(help_text="The window reaches beyond that range.")


class UnitSpreadSerializer(serializers.Serializer):
    n_units = serializers.IntegerField()
    n_meeting = serializers.IntegerField(
        allow_null=True, help_text="Units whose own swing reaches min_swing (null without one)."
    )
    fraction_meeting = serializers.FloatField(allow_null=True)
    worst = serializers.CharField(help_text="The unit with the smallest swing.")
    worst_swing = serializers.FloatField(allow_null=True)


class PartHitSerializer(serializers.Serializer):
    """One part: swings of its counted lots' median units over the window [V1, V2]."""

    part = serializers.CharField(source="part_number", help_text="Part number.")
    part_id = serializers.IntegerField()
    kind = serializers.CharField()
    description = serializers.CharField()
    rated_reverse_v = serializers.FloatField(allow_null=True)
    v1_v = serializers.FloatField(help_text="Window used, start [V].")
    v2_v = serializers.FloatField(help_text="Window used, end [V].")
    swing_median = serializers.FloatField(help_text="Median swing over the counted lots.")
    swing_worst = serializers.FloatField(help_text="Smallest lot swing.")
    worst_lot = serializers.CharField(help_text="Code of the lot with the smallest swing.")
    c1_f = serializers.FloatField(help_text="C at V1, median over the counted lots [F].")
    c2_f = serializers.FloatField(help_text="C at V2, median over the counted lots [F].")
    n_lots = serializers.IntegerField()
    n_units = serializers.IntegerField()
    open_flags = serializers.IntegerField()
    latest_received = serializers.DateField(allow_null=True)
    n_left_out = serializers.IntegerField(help_text="Lots left out (e.g. extrapolated).")
    n_extrapolated = serializers.IntegerField(help_text="Counted lots judged by extrapolation.")
    warnings = serializers.ListField(child=serializers.CharField())
    lots = LotFiguresSerializer(many=True)
    units = UnitSpreadSerializer()


class SearchPageSerializer(serializers.Serializer):
    """One page of ranked parts, with how to reach the others."""

    count = serializers.IntegerField(source="total", help_text="Parts matching the query.")
    page = serializers.IntegerField(help_text="This page (the last one if asked beyond it).")
    n_pages = serializers.IntegerField()
    per_page = serializers.IntegerField(source="query.per_page")
    next = serializers.SerializerMethodField()
    previous = serializers.SerializerMethodField()
    warnings = serializers.ListField(child=serializers.CharField())
    query = SearchParams(help_text="The query answered, defaults filled in.")
    results = PartHitSerializer(source="hits", many=True)

    def _page_url(self, page: int) -> str:
        from rest_framework.utils.urls import replace_query_param

        request = self.context["request"]
        return replace_query_param(request.build_absolute_uri(), "page", page)

    def get_next(self, result) -> str | None:
        return self._page_url(result.page + 1) if result.page < result.n_pages else None

    def get_previous(self, result) -> str | None:
        return self._page_url(result.page - 1) if result.page > 1 else None
