"""Calibrations: list, retrieve, record a new one. A calibration is a dated measurement and is
never edited: a changed fixture gets a new calibration, which applies from its time on."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework import mixins, status, viewsets
from rest_framework.response import Response

from labdb.api.filters import CalibrationFilter
from labdb.api.pagination import CatalogPagination
from labdb.api.serializers.calibrations import CalibrationCreateSerializer, CalibrationSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.measurements.models import Calibration
from labdb.measurements.services import record_calibration


class CalibrationViewSet(
    ApiViewMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    viewsets.GenericViewSet,
):
    queryset = Calibration.objects.select_related("fixture")
    serializer_class = CalibrationSerializer
    filterset_class = CalibrationFilter
    pagination_class = CatalogPagination

    @extend_schema(request=CalibrationCreateSerializer, responses={201: CalibrationSerializer})
    def create(self, request, *args, **kwargs):
        form = CalibrationCreateSerializer(data=request.data)
        form.is_valid(raise_exception=True)
        data = form.validated_data
        cal = record_calibration(
            data["fixture"],
            data["measured_at"],
            data["ref_capacitance_f"],
            data["freq_hz"],
            user=request.user,
            notes=data["notes"],
        )
        return Response(CalibrationSerializer(cal).data, status=status.HTTP_201_CREATED)
