"""Fit versions: one version by id, and its SPICE model card."""

from __future__ import annotations

from django.http import HttpResponse
from django.shortcuts import get_object_or_404
from django.utils import timezone
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import extend_schema
from rest_framework import generics
from rest_framework.renderers import JSONRenderer
from rest_framework.views import APIView

from labdb.api import spice
from labdb.api.renderers import PlainTextRenderer
from labdb.api.serializers.fits import FitSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.measurements.models import Fit


class FitDetailView(ApiViewMixin, generics.RetrieveAPIView):
    queryset = Fit.objects.all()
    serializer_class = FitSerializer


def card_for_fit(fit: Fit) -> str:
    """The SPICE card of a unit fit or of a lot-model fit, header facts from the database."""
    if fit.sweep_id is not None:
        unit = fit.sweep.unit
        lot, part = unit.lot, unit.lot.part
        label = f"fit {fit.pk}: version {fit.version} of sweep {fit.sweep_id}, model {fit.model}"
        labels = (part.part_number, lot.code, unit.label, f"v{fit.version}")
        unit_label = unit.label
    else:
        lot = fit.lot_summary.lot
        part = lot.part
        label = f"fit {fit.pk}: version {fit.version} of the lot model, model {fit.model}"
        labels = (part.part_number, lot.code, "lot", f"v{fit.version}")
        unit_label = None
    source = spice.CardSource(
        part=part.part_number,
        lot=lot.code,
        unit=unit_label,
        fit=label,
        fitter_version=fit.fitter_version,
        written_at=timezone.now(),
    )
    return spice.model_card(
        fit.params,
        name=spice.model_name(*labels),
        source=source,
        bias_range_v=(fit.bias_min_v, fit.bias_max_v),
    )


class FitSpiceView(ApiViewMixin, APIView):
    """The fit as a SPICE diode ``.model`` card (text/plain)."""

    renderer_classes = [JSONRenderer, PlainTextRenderer]

    @extend_schema(responses={(200, "text/plain"): OpenApiTypes.STR})
    def get(self, request, pk: int):
        fit = get_object_or_404(
            Fit.objects.select_related("sweep__unit__lot__part", "lot_summary__lot__part"), pk=pk
        )
        return HttpResponse(card_for_fit(fit), content_type="text/plain; charset=utf-8")
