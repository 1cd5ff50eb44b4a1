"""Flags: a finding that a unit or lot stands out, its evidence, and the curators' review."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import NamedChoiceField
from labdb.quality.models import Flag, FlagState
from labdb.quality.services import RULES


class FlagSerializer(serializers.ModelSerializer):
    """A flag as stored; figures inside ``evidence`` are SI (F, V, Hz) like everywhere else."""

    part = serializers.CharField(
        source="part.part_number", read_only=True, help_text="Part number."
    )
    lot = serializers.IntegerField(source="lot_id", read_only=True, allow_null=True)
    lot_code = serializers.CharField(source="lot.code", read_only=True, allow_null=True)
    unit = serializers.IntegerField(source="unit_id", read_only=True, allow_null=True)
    unit_label = serializers.CharField(source="unit.label", read_only=True, allow_null=True)
    rule_label = serializers.SerializerMethodField()
    state = NamedChoiceField(choices=FlagState.choices, enum_name="FlagStateEnum", read_only=True)
    reviewed_by = serializers.CharField(
        source="reviewed_by.username", read_only=True, allow_null=True, help_text="User name."
    )

    class Meta:
        model = Flag
        fields = [
            "id",
            "part",
            "lot",
            "lot_code",
            "unit",
            "unit_label",
            "rule",
            "rule_label",
            "figure",
            "condition",
            "summary",
            "evidence",
            "active",
            "state",
            "note",
            "reviewed_by",
            "reviewed_at",
            "created_at",
            "updated_at",
        ]
        read_only_fields = fields

    def get_rule_label(self, flag: Flag) -> str:
        return RULES.get(flag.rule, flag.rule)


class FlagReviewSerializer(serializers.Serializer):
    """A review: the new state and why (a note is required to acknowledge)."""

    state = NamedChoiceField(choices=FlagState.choices, enum_name="FlagStateEnum")
    note = serializers.CharField(
        required=False,
        allow_blank=True,
        default="",
        max_length=4000,
        trim_whitespace=True,
        help_text="Why; required when acknowledging.",
    )
