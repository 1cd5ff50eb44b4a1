"""Lots: list, retrieve, create, update; the lot summary and the lot's SPICE corner models."""

from __future__ import annotations

from django.http import HttpResponse
from django.shortcuts import get_object_or_404
from django.utils import timezone
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import OpenApiParameter, extend_schema
from rest_framework import mixins, serializers, viewsets
from rest_framework.renderers import JSONRenderer
from rest_framework.response import Response
from rest_framework.views import APIView

from labdb.api import corners, spice
from labdb.api.filters import LotFilter
from labdb.api.pagination import CatalogPagination
from labdb.api.renderers import PlainTextRenderer
from labdb.api.serializers.common import FiniteFloatField
from labdb.api.serializers.lots import LotSerializer
from labdb.api.serializers.summaries import LotSummarySerializer
from labdb.api.views.base import ApiViewMixin
from labdb.catalog.models import Lot
from labdb.measurements.models import Illumination


class LotViewSet(
    ApiViewMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    viewsets.GenericViewSet,
):
    queryset = Lot.objects.select_related("part")
    serializer_class = LotSerializer
    filterset_class = LotFilter
    pagination_class = CatalogPagination


class ConditionSerializer(serializers.Serializer):
    illumination = serializers.ChoiceField(choices=Illumination.choices, required=False)
    temperature_c = FiniteFloatField(required=False, min_value=-273.15, max_value=500)


class CornerQuerySerializer(ConditionSerializer):
    corner = serializers.ChoiceField(choices=corners.CORNERS, default="typ")


_CONDITION_PARAMS = [
    OpenApiParameter("illumination", str, enum=Illumination.values, description="default dark"),
    OpenApiParameter(
        "temperature_c", float, description="[°C]; the summary nearest to it (default 25)"
    ),
]


class LotSummaryView(ApiViewMixin, APIView):
    """The lot's summary for one condition; 409 while none has been computed."""

    @extend_schema(parameters=_CONDITION_PARAMS, responses=LotSummarySerializer)
    def get(self, request, pk: int):
        lot = get_object_or_404(Lot, pk=pk)
        query = ConditionSerializer(data=request.query_params)
        query.is_valid(raise_exception=True)
        summary = corners.select_summary(lot, **query.validated_data)
        return Response(LotSummarySerializer(summary).data)


class LotSpiceView(ApiViewMixin, APIView):
    """A SPICE ``.model`` card of the lot: typical model or a 10th/90th-percentile corner."""

    renderer_classes = [JSONRenderer, PlainTextRenderer]

    @extend_schema(
        parameters=[
            OpenApiParameter("corner", str, enum=list(corners.CORNERS), description="default typ"),
            *_CONDITION_PARAMS,
        ],
        responses={(200, "text/plain"): OpenApiTypes.STR},
    )
    def get(self, request, pk: int):
        lot = get_object_or_404(Lot.objects.select_related("part"), pk=pk)
        query = CornerQuerySerializer(data=request.query_params)
        query.is_valid(raise_exception=True)
        corner = query.validated_data.pop("corner")
        summary = corners.select_summary(lot, **query.validated_data)
        model = corners.lot_corner(summary, corner)
        source = spice.CardSource(
            part=lot.part.part_number,
            lot=lot.code,
            unit=None,
            fit=f"{corner} corner ({summary.illumination}, {summary.temperature_c:g} °C): "
            f"{model.source}",
            fitter_version=model.fitter_version,
            written_at=timezone.now(),
        )
        card = spice.model_card(
            model.params,
            name=spice.model_name(lot.part.part_number, lot.code, corner),
            source=source,
            bias_range_v=model.bias_range_v,
        )
        return HttpResponse(card, content_type="text/plain; charset=utf-8")
