"""Sweeps as read back: conditions, points (SI) with the raw reading, the raw file, current fit."""

from __future__ import annotations

from django.urls import reverse
from rest_framework import serializers

from labdb.api.serializers.common import json_safe
from labdb.api.serializers.fits import FitSerializer
from labdb.measurements.models import Sweep, SweepKind


class ConditionsSerializer(serializers.Serializer):
    temperature_c = serializers.FloatField(help_text="Temperature [°C].")
    illumination = serializers.CharField()
    test_frequency_hz = serializers.FloatField(allow_null=True, help_text="Test signal [Hz].")
    test_level_v = serializers.FloatField(allow_null=True, help_text="Test signal level [V].")
    measured_at = serializers.DateTimeField(allow_null=True)
    operator = serializers.CharField(allow_blank=True)


class ReadingSerializer(serializers.Serializer):
    quantity = serializers.ChoiceField(
        choices=["capacitance_f", "frequency_hz"], help_text="What the fixture read."
    )
    unit = serializers.ChoiceField(choices=["F", "Hz"])
    values = serializers.ListField(child=serializers.FloatField())


class PointsSerializer(serializers.Serializer):
    """Points sorted by reverse bias; ``reading`` is what the fixture itself reported."""

    bias_v = serializers.ListField(child=serializers.FloatField(), help_text="Reverse bias [V].")
    capacitance_f = serializers.ListField(child=serializers.FloatField(), help_text="[F].")
    capacitance_sigma_f = serializers.ListField(
        child=serializers.FloatField(allow_null=True),
        allow_null=True,
        help_text="1σ of C from the oscillator calibration [F]; null for meter sweeps.",
    )
    reading = ReadingSerializer()
    extras = serializers.DictField(
        child=serializers.ListField(child=serializers.FloatField(allow_null=True)),
        help_text="Other columns of the file (SI), by name.",
    )

    def to_representation(self, sweep: Sweep):
        pts = sweep.points or {}
        if sweep.kind == SweepKind.ZF:
            return None  # impedance against frequency: see sweeps/{id}/impedance
        if "frequency_hz" in pts:
            reading = {"quantity": "frequency_hz", "unit": "Hz", "values": pts["frequency_hz"]}
        else:
            reading = {"quantity": "capacitance_f", "unit": "F", "values": pts["capacitance_f"]}
        return json_safe(
            {
                "bias_v": pts["bias_v"],
                "capacitance_f": pts["capacitance_f"],
                "capacitance_sigma_f": pts.get("capacitance_sigma_f"),
                "reading": reading,
                "extras": pts.get("extras") or {},
            }
        )


class RawFileSerializer(serializers.Serializer):
    name = serializers.CharField(source="raw_name")
    sha256 = serializers.CharField(source="raw_sha256")
    size = serializers.IntegerField(source="raw_size", help_text="[bytes]")
    url = serializers.SerializerMethodField()

    def get_url(self, sweep: Sweep) -> str:
        return reverse("api:sweep-raw", args=[sweep.pk])


class SweepSerializer(serializers.Serializer):
    """A sweep without its points (lists); the detail adds ``points``."""

    id = serializers.IntegerField()
    part = serializers.CharField(source="unit.lot.part.part_number")
    lot = serializers.IntegerField(source="unit.lot_id")
    lot_code = serializers.CharField(source="unit.lot.code")
    unit = serializers.IntegerField(source="unit_id")
    unit_label = serializers.CharField(source="unit.label")
    fixture = serializers.CharField(source="fixture.name")
    kind = serializers.ChoiceField(choices=SweepKind.choices)
    calibration = serializers.IntegerField(source="calibration_id", allow_null=True)
    conditions = ConditionsSerializer(source="*")
    n_points = serializers.IntegerField()
    bias_min_v = serializers.FloatField(help_text="Lowest reverse bias [V].")
    bias_max_v = serializers.FloatField(help_text="Highest reverse bias [V].")
    bias_negated = serializers.BooleanField(
        help_text="The file gave diode voltage (negative); it was turned into reverse bias."
    )
    exceeds_rating = serializers.BooleanField(
        help_text="The sweep went beyond the part's rated reverse voltage."
    )
    archived = serializers.BooleanField()
    raw = RawFileSerializer(source="*")
    uploaded_at = serializers.DateTimeField()
    current_fit = FitSerializer(allow_null=True)


class SweepDetailSerializer(SweepSerializer):
    points = PointsSerializer(
        source="*",
        allow_null=True,
        help_text="Null for an impedance sweep (kind zf): its points are at sweeps/{id}/impedance.",
    )
    notes = serializers.ListField(
        child=serializers.CharField(), help_text="What the import noticed."
    )


class RecordedSerializer(serializers.Serializer):
    source = serializers.CharField(help_text="File (and unit column) the sweep came from.")
    status = serializers.ChoiceField(choices=["stored", "duplicate"])
    sweep = serializers.IntegerField()


class ErrorEntrySerializer(serializers.Serializer):
    field = serializers.CharField(required=False)
    file = serializers.CharField(required=False)
    line = serializers.IntegerField(required=False)
    column = serializers.CharField(required=False)
    message = serializers.CharField()


class RejectedSerializer(serializers.Serializer):
    source = serializers.CharField()
    errors = ErrorEntrySerializer(many=True)


class UploadResultSerializer(SweepDetailSerializer):
    """The (first) recorded sweep, whether it was already stored, and what else the file held."""

    duplicate = serializers.BooleanField(help_text="True when nothing new was stored.")
    recorded = RecordedSerializer(many=True)
    rejected = RejectedSerializer(many=True, help_text="Archive members that were refused.")
