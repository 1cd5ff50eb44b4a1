"""Lots: a batch of one part received together."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import ModelConstraintsMixin
from labdb.catalog.models import Lot, Part


class LotSerializer(ModelConstraintsMixin, serializers.ModelSerializer):
    part = serializers.SlugRelatedField(
        slug_field="part_number", queryset=Part.objects.all(), help_text="Part number."
    )

    class Meta:
        model = Lot
        fields = [
            "id",
            "part",
            "code",
            "date_code",
            "received_on",
            "source",
            "notes",
            "archived",
            "created_at",
        ]
        read_only_fields = ["id", "created_at"]

    def validate_part(self, part: Part) -> Part:
        if self.instance is not None and part.pk != self.instance.part_id:
            raise serializers.ValidationError("a lot stays with its part; create a new lot")
        return part

    def validate_code(self, value: str) -> str:
        value = value.strip()
        if not value:
            raise serializers.ValidationError("a lot code is not empty")
        return value
