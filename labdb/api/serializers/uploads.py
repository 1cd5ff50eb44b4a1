"""What a bench script posts to ``sweeps/``: a file, or the points as JSON, plus conditions."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import FiniteFloatField, positive
from labdb.measurements.models import Illumination, SweepKind
from labdb.measurements.services.fits import MODEL_CHOICES

#: Fields handed on to the recording service as the caller's statement (SweepContext).
CONTEXT_FIELDS = (
    "part",
    "lot",
    "unit",
    "fixture",
    "kind",
    "temperature_c",
    "illumination",
    "measured_at",
    "operator",
    "test_frequency_hz",
    "test_level_v",
    "bias_v",
)


class PointsInputSerializer(serializers.Serializer):
    """SI arrays of equal length; give ``capacitance_f`` (meter) or ``frequency_hz`` (oscillator)."""

    bias_v = serializers.ListField(
        child=FiniteFloatField(), max_length=100_000, help_text="Reverse bias [V], positive."
    )
    capacitance_f = serializers.ListField(
        child=FiniteFloatField(), required=False, max_length=100_000, help_text="[F]"
    )
    frequency_hz = serializers.ListField(
        child=FiniteFloatField(), required=False, max_length=100_000, help_text="[Hz]"
    )

    def validate(self, attrs):
        given = [k for k in ("capacitance_f", "frequency_hz") if k in attrs]
        if len(given) != 1:
            raise serializers.ValidationError("give either capacitance_f or frequency_hz")
        return attrs


class SweepUploadSerializer(serializers.Serializer):
    """Values given here win over the file's own ``# key: value`` lines (the change is noted)."""

    file = serializers.FileField(
        required=False,
        help_text="A bench file: delimited text, .xlsx, a Touchstone one-port .s1p, or a .zip.",
    )
    points = PointsInputSerializer(required=False)
    part = serializers.CharField(required=False, max_length=80, help_text="Part number.")
    lot = serializers.CharField(required=False, max_length=80, help_text="Lot code.")
    unit = serializers.CharField(required=False, max_length=80, help_text="Unit label.")
    fixture = serializers.CharField(required=False, max_length=120, help_text="Fixture name.")
    kind = serializers.ChoiceField(choices=SweepKind.choices, required=False)
    temperature_c = FiniteFloatField(required=False, min_value=-273.15, max_value=500)
    illumination = serializers.ChoiceField(choices=Illumination.choices, required=False)
    measured_at = serializers.DateTimeField(required=False)
    operator = serializers.CharField(required=False, max_length=80, allow_blank=True)
    test_frequency_hz = FiniteFloatField(
        required=False, validators=[positive("test_frequency_hz")], help_text="[Hz]"
    )
    test_level_v = FiniteFloatField(
        required=False, validators=[positive("test_level_v")], help_text="[V]"
    )
    model = serializers.ChoiceField(
        choices=MODEL_CHOICES, default="auto", help_text="Junction model to fit."
    )
    bias_v = FiniteFloatField(
        required=False,
        min_value=-1.0,
        help_text="Reverse bias of an impedance sweep (.s1p or impedance table) [V]; wins "
        "over the file's own bias line.",
    )

    def validate(self, attrs):
        if ("file" in attrs) == ("points" in attrs):
            raise serializers.ValidationError(
                "send a bench file as multipart 'file', or JSON 'points' — exactly one of them"
            )
        return attrs
