"""Fixtures: capacitance meters and test oscillators."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import FiniteFloatField, ModelConstraintsMixin, positive
from labdb.measurements.models import Fixture


class FixtureSerializer(ModelConstraintsMixin, serializers.ModelSerializer):
    test_frequency_hz = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[positive("test_frequency_hz")],
        help_text="Meter test-signal frequency [Hz].",
    )
    test_level_v = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[positive("test_level_v")],
        help_text="Meter test-signal level [V].",
    )
    nominal_inductance_h = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[positive("nominal_inductance_h")],
        help_text="Oscillator tank inductance, nominal [H].",
    )
    coupling_f = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[positive("coupling_f")],
        help_text="Series coupling capacitor between tank and unit [F].",
    )

    class Meta:
        model = Fixture
        fields = [
            "id",
            "name",
            "kind",
            "description",
            "test_frequency_hz",
            "test_level_v",
            "nominal_inductance_h",
            "coupling_f",
            "archived",
            "created_at",
        ]
        read_only_fields = ["id", "created_at"]

    def validate_name(self, value: str) -> str:
        value = value.strip()
        if not value:
            raise serializers.ValidationError("a fixture name is not empty")
        return value

    def validate(self, attrs):
        fixture = self.instance
        changes_physics = (
            any(k in attrs and attrs[k] != getattr(fixture, k) for k in ("kind", "coupling_f"))
            if fixture is not None
            else False
        )
        if changes_physics and (fixture.sweeps.exists() or fixture.calibrations.exists()):
            raise serializers.ValidationError(
                {
                    "kind": "this fixture has sweeps or calibrations: its kind and coupling "
                    "capacitor stay as they were; add a new fixture instead"
                }
            )
        return super().validate(attrs)
