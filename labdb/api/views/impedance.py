"""Impedance sweeps: points and R–L–C fit versions, C–V derived from a bias series, Q at f."""

from __future__ import annotations

from django.shortcuts import get_object_or_404
from drf_spectacular.utils import extend_schema
from rest_framework import exceptions, generics
from rest_framework.response import Response
from rest_framework.views import APIView

from labdb.api.errors import Conflict
from labdb.api.pagination import VersionCursor
from labdb.api.serializers.impedance import (
    DeriveRequestSerializer,
    ImpedanceFitSerializer,
    ImpedanceSweepSerializer,
    QueryFrequencySerializer,
    UnitQSerializer,
)
from labdb.api.serializers.sweeps import UploadResultSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.api.views.sweeps import upload_result
from labdb.catalog.models import Unit
from labdb.measurements.models import ImpedanceFit, Sweep, SweepKind
from labdb.measurements.services.bias_series import derive_cv_from_bias_series, q_at_frequency


def impedance_sweep(pk: int) -> Sweep:
    """The sweep, which must be an impedance sweep (404 otherwise, saying why)."""
    sweep = get_object_or_404(Sweep, pk=pk)
    if sweep.kind != SweepKind.ZF:
        raise exceptions.NotFound(f"sweep {pk} is a '{sweep.kind}' sweep, not an impedance sweep")
    return sweep


class SweepImpedanceView(ApiViewMixin, APIView):
    """An impedance sweep's points (f, Re Z, Im Z) and its current series R–L–C fit."""

    @extend_schema(responses=ImpedanceSweepSerializer)
    def get(self, request, pk: int):
        return Response(ImpedanceSweepSerializer(impedance_sweep(pk)).data)


class SweepImpedanceFitsView(ApiViewMixin, generics.ListAPIView):
    """Every R–L–C fit version of an impedance sweep, newest first."""

    serializer_class = ImpedanceFitSerializer
    pagination_class = VersionCursor
    filter_backends: list = []

    def get_queryset(self):
        if getattr(self, "swagger_fake_view", False):  # schema generation: no request
            return ImpedanceFit.objects.none()
        return impedance_sweep(self.kwargs["pk"]).impedance_fits.all()


class UnitDeriveCvView(ApiViewMixin, APIView):
    """Derive the unit's C–V (Q–V in ``points.extras.q``) from its bias series of impedance
    sweeps: 201 with the stored sweep and fit, 200 with ``duplicate: true`` when this very
    series was derived before."""

    @extend_schema(
        request=DeriveRequestSerializer,
        responses={201: UploadResultSerializer, 200: UploadResultSerializer},
    )
    def post(self, request, pk: int):
        unit = get_object_or_404(Unit, pk=pk)
        form = DeriveRequestSerializer(data=request.data)
        form.is_valid(raise_exception=True)
        data = form.validated_data
        outcomes = derive_cv_from_bias_series(
            unit, data.get("frequency_hz"), request.user, origin="api", model=data["model"]
        )
        return upload_result(outcomes)


class UnitQView(ApiViewMixin, APIView):
    """Q and Ceff of the unit against reverse bias at ``?frequency_hz=`` from its newest
    impedance fits (409 when none covers that frequency)."""

    @extend_schema(parameters=[QueryFrequencySerializer], responses=UnitQSerializer)
    def get(self, request, pk: int):
        unit = get_object_or_404(Unit, pk=pk)
        query = QueryFrequencySerializer(data=request.query_params)
        query.is_valid(raise_exception=True)
        f = query.validated_data["frequency_hz"]
        found = q_at_frequency(unit, f)
        if found is None:
            raise Conflict(f"unit {unit.label} has no impedance fit covering {f:g} Hz")
        return Response(UnitQSerializer(found).data)
