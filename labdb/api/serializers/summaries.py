"""Lot summaries: statistics of a lot's unit fits, the 10–90 % band, the lot model."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from labdb.api.serializers.common import json_safe
from labdb.api.serializers.fits import FitSerializer
from labdb.quality.models import LotSummary


class LotSummarySerializer(serializers.ModelSerializer):
    """Capacitances [F], biases [V] (reverse positive), temperature [°C]."""

    lot_fit = serializers.SerializerMethodField()

    class Meta:
        model = LotSummary
        fields = [
            "id",
            "lot",
            "illumination",
            "temperature_c",
            "n_units",
            "n_sweeps",
            "cjo_med",
            "vj_med",
            "m_med",
            "cp_med",
            "c_low_med_f",
            "c_high_med_f",
            "swing_med",
            "swing_min",
            "bias_min_v",
            "bias_max_v",
            "figures",
            "band",
            "computed_at",
            "lot_fit",
        ]
        read_only_fields = fields

    @extend_schema_field(FitSerializer(allow_null=True))
    def get_lot_fit(self, summary: LotSummary) -> dict | None:
        fit = summary.fits.order_by("-version").first()
        return FitSerializer(fit).data if fit is not None else None

    def to_representation(self, instance):
        return json_safe(super().to_representation(instance))
