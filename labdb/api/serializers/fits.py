"""Fit versions, exactly as the API contract lists their fields."""

from __future__ import annotations

from rest_framework import serializers

from labdb.api.serializers.common import json_safe


class FitParamsSerializer(serializers.Serializer):
    cjo = serializers.FloatField(help_text="Zero-bias junction capacitance CJO [F].")
    vj = serializers.FloatField(help_text="Junction potential VJ [V].")
    m = serializers.FloatField(help_text="Grading coefficient M.")
    cp = serializers.FloatField(
        required=False, help_text="Package capacitance CP [F] (model junction+cp only)."
    )


class FitMetricsSerializer(serializers.Serializer):
    rms_rel = serializers.FloatField(help_text="RMS relative residual.")
    r2 = serializers.FloatField(allow_null=True)
    aicc = serializers.FloatField(allow_null=True)
    n_points = serializers.IntegerField()
    bias_min_v = serializers.FloatField(help_text="Lowest fitted reverse bias [V].")
    bias_max_v = serializers.FloatField(help_text="Highest fitted reverse bias [V].")


class FitSerializer(serializers.Serializer):
    """One immutable fit version; ``sweep`` is null for a lot model."""

    id = serializers.IntegerField()
    sweep = serializers.IntegerField(source="sweep_id", allow_null=True)
    version = serializers.IntegerField()
    model = serializers.CharField(help_text="junction or junction+cp")
    params = FitParamsSerializer()
    stderr = serializers.DictField(
        child=serializers.FloatField(allow_null=True), help_text="Standard errors, units of params."
    )
    correlation = serializers.ListField(
        child=serializers.ListField(child=serializers.FloatField(allow_null=True)),
        help_text="Correlation matrix of the parameters, in the order of params.",
    )
    metrics = FitMetricsSerializer(source="*")
    warnings = serializers.ListField(child=serializers.CharField())
    fitter_version = serializers.CharField()
    created_at = serializers.DateTimeField()

    def to_representation(self, instance):
        return json_safe(super().to_representation(instance))
