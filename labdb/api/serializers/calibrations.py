"""Calibrations of oscillator fixtures: reference readings in, fitted L and C_stray out."""

from __future__ import annotations

import math

from rest_framework import serializers

from labdb.api.serializers.common import FiniteFloatField, json_safe
from labdb.measurements.models import Calibration, Fixture


class CalibrationSerializer(serializers.ModelSerializer):
    """L [H] and C_stray [F] from 1/(2πf)² = L·(C_stray + C_ref), with their 1σ."""

    fixture = serializers.PrimaryKeyRelatedField(read_only=True)
    inductance_sigma_h = serializers.SerializerMethodField()
    stray_sigma_f = serializers.SerializerMethodField()

    class Meta:
        model = Calibration
        fields = [
            "id",
            "fixture",
            "measured_at",
            "ref_capacitance_f",
            "freq_hz",
            "inductance_h",
            "inductance_sigma_h",
            "stray_f",
            "stray_sigma_f",
            "covariance",
            "residuals",
            "coupling_f",
            "notes",
            "created_at",
        ]
        read_only_fields = fields

    def get_inductance_sigma_h(self, cal: Calibration) -> float | None:
        return _sigma(cal.covariance, 0)

    def get_stray_sigma_f(self, cal: Calibration) -> float | None:
        return _sigma(cal.covariance, 1)

    def to_representation(self, instance):
        return json_safe(super().to_representation(instance))


def _sigma(cov, i: int) -> float | None:
    try:
        value = float(cov[i][i])
    except (TypeError, IndexError, ValueError):
        return None
    return math.sqrt(value) if math.isfinite(value) and value >= 0 else None


class CalibrationCreateSerializer(serializers.Serializer):
    """Reference readings of an oscillator fixture; 0 F stands for the open fixture."""

    fixture = serializers.PrimaryKeyRelatedField(
        queryset=Fixture.objects.all(), help_text="Oscillator fixture id."
    )
    measured_at = serializers.DateTimeField()
    ref_capacitance_f = serializers.ListField(
        child=FiniteFloatField(min_value=0),
        min_length=2,
        max_length=100,
        help_text="Reference capacitances [F]; 0 = open fixture.",
    )
    freq_hz = serializers.ListField(
        child=FiniteFloatField(),
        min_length=2,
        max_length=100,
        help_text="Oscillator frequency with each reference [Hz].",
    )
    notes = serializers.CharField(required=False, allow_blank=True, max_length=2000, default="")

    def validate(self, attrs):
        if len(attrs["ref_capacitance_f"]) != len(attrs["freq_hz"]):
            raise serializers.ValidationError(
                {"freq_hz": "give one frequency per reference capacitance"}
            )
        return attrs
