"""Parts: a component type by part number, with its rating, reference window and spec limits."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import FiniteFloatField, ModelConstraintsMixin, positive
from labdb.catalog.models import Part


def _at_least_one(value):
    if value is not None and value < 1:
        raise serializers.ValidationError("a swing C(V1)/C(V2) is at least 1")


def _fraction(value):
    if not 0 < value < 1:
        raise serializers.ValidationError("shift_tolerance is a fraction: 0 < value < 1")


class PartSerializer(ModelConstraintsMixin, serializers.ModelSerializer):
    """Voltages [V] are reverse bias (positive); capacitances [F]."""

    rated_reverse_v = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[positive("rated_reverse_v")],
        help_text="Maximum rated reverse voltage [V], from the data sheet.",
    )
    ref_bias_low_v = FiniteFloatField(
        required=False, allow_null=True, help_text="Low end of the reference bias window [V]."
    )
    ref_bias_high_v = FiniteFloatField(
        required=False, allow_null=True, help_text="High end of the reference bias window [V]."
    )
    spec_bias_v = FiniteFloatField(
        required=False, allow_null=True, help_text="Bias of the capacitance spec limits [V]."
    )
    spec_c_min_f = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[positive("spec_c_min_f")],
        help_text="Lowest capacitance allowed at spec_bias_v [F].",
    )
    spec_c_max_f = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[positive("spec_c_max_f")],
        help_text="Highest capacitance allowed at spec_bias_v [F].",
    )
    spec_min_swing = FiniteFloatField(
        required=False,
        allow_null=True,
        validators=[_at_least_one],
        help_text="Smallest acceptable swing over the reference window (≥ 1).",
    )
    shift_tolerance = FiniteFloatField(
        required=False,
        validators=[_fraction],
        help_text="Relative lot-to-lot shift treated as practically large (0–1).",
    )

    constraint_messages = {
        "part_ref_window_ordered": (
            "ref_bias_high_v",
            "ref_bias_low_v must be below ref_bias_high_v",
        ),
    }

    class Meta:
        model = Part
        fields = [
            "id",
            "part_number",
            "kind",
            "description",
            "manufacturer",
            "rated_reverse_v",
            "ref_bias_low_v",
            "ref_bias_high_v",
            "spec_bias_v",
            "spec_c_min_f",
            "spec_c_max_f",
            "spec_min_swing",
            "shift_tolerance",
            "archived",
            "created_at",
        ]
        read_only_fields = ["id", "created_at"]

    def validate_part_number(self, value: str) -> str:
        value = value.strip()
        if not value or "/" in value:
            raise serializers.ValidationError("a part number is not empty and holds no '/'")
        return value

    def validate(self, attrs):
        attrs = super().validate(attrs)
        lo = attrs.get("spec_c_min_f", getattr(self.instance, "spec_c_min_f", None))
        hi = attrs.get("spec_c_max_f", getattr(self.instance, "spec_c_max_f", None))
        if lo is not None and hi is not None and lo > hi:
            raise serializers.ValidationError({"spec_c_max_f": "must not be below spec_c_min_f"})
        return attrs
