"""Units: one physical device of a lot."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import ModelConstraintsMixin
from labdb.catalog.models import Lot, Unit


class UnitSerializer(ModelConstraintsMixin, serializers.ModelSerializer):
    lot = serializers.PrimaryKeyRelatedField(queryset=Lot.objects.all(), help_text="Lot id.")
    part = serializers.CharField(source="lot.part.part_number", read_only=True)
    lot_code = serializers.CharField(source="lot.code", read_only=True)

    class Meta:
        model = Unit
        fields = ["id", "lot", "lot_code", "part", "label", "notes", "archived", "created_at"]
        read_only_fields = ["id", "created_at"]

    def validate_lot(self, lot: Lot) -> Lot:
        if self.instance is not None and lot.pk != self.instance.lot_id:
            raise serializers.ValidationError("a unit stays in its lot")
        return lot

    def validate_label(self, value: str) -> str:
        value = value.strip()
        if not value:
            raise serializers.ValidationError("a unit label is not empty")
        return value
