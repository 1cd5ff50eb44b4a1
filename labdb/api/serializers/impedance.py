"""Impedance sweeps as read back (points, R–L–C fit versions), derive requests, Q at a frequency."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from labdb.api.serializers.common import FiniteFloatField, json_safe, positive
from labdb.measurements.services.fits import MODEL_CHOICES


class ImpedanceFitSerializer(serializers.Serializer):
    """One immutable version of a sweep's series R–L–C equivalent (SI)."""

    id = serializers.IntegerField()
    sweep = serializers.IntegerField(source="sweep_id")
    version = serializers.IntegerField()
    rs_ohm = serializers.FloatField(help_text="Series resistance Rs (ESR) [ohm].")
    ls_h = serializers.FloatField(help_text="Series inductance Ls [H].")
    cs_f = serializers.FloatField(help_text="Series capacitance Cs [F].")
    srf_hz = serializers.FloatField(
        allow_null=True, help_text="Self-resonant frequency 1/(2π√(Ls·Cs)) [Hz]; null if Ls = 0."
    )
    stderr = serializers.DictField(
        child=serializers.FloatField(allow_null=True),
        help_text="Standard errors (rs_ohm, ls_h, cs_f).",
    )
    correlation = serializers.ListField(
        child=serializers.ListField(child=serializers.FloatField(allow_null=True)),
        help_text="Correlation matrix in the order rs_ohm, ls_h, cs_f.",
    )
    rms_rel = serializers.FloatField(help_text="RMS relative misfit |Z_fit − Z|/|Z|.")
    n_points = serializers.IntegerField()
    frequency_min_hz = serializers.FloatField(help_text="[Hz]")
    frequency_max_hz = serializers.FloatField(help_text="[Hz]")
    converged = serializers.BooleanField()
    warnings = serializers.ListField(child=serializers.CharField())
    fitter_version = serializers.CharField()
    created_at = serializers.DateTimeField()

    def to_representation(self, instance):
        return json_safe(super().to_representation(instance))


class ImpedanceSweepSerializer(serializers.Serializer):
    """The points of an impedance sweep (kind ``zf``) and its current R–L–C fit."""

    sweep = serializers.IntegerField(source="pk")
    bias_v = serializers.FloatField(source="bias_min_v", help_text="Reverse bias [V].")
    frequency_hz = serializers.SerializerMethodField(help_text="Test frequency [Hz].")
    z_real_ohm = serializers.SerializerMethodField(help_text="Re Z [ohm].")
    z_imag_ohm = serializers.SerializerMethodField(help_text="Im Z [ohm].")
    z0_ohm = serializers.SerializerMethodField(help_text="Touchstone reference impedance [ohm].")
    current_fit = serializers.SerializerMethodField()

    def get_frequency_hz(self, sweep) -> list[float]:
        return sweep.points["frequency_hz"]

    def get_z_real_ohm(self, sweep) -> list[float]:
        return sweep.points["z_real"]

    def get_z_imag_ohm(self, sweep) -> list[float]:
        return sweep.points["z_imag"]

    def get_z0_ohm(self, sweep) -> float | None:
        return sweep.points.get("z0_ohm")

    @extend_schema_field(ImpedanceFitSerializer(allow_null=True))
    def get_current_fit(self, sweep):
        fit = sweep.impedance_fits.order_by("-version").first()
        return None if fit is None else ImpedanceFitSerializer(fit).data


class DeriveRequestSerializer(serializers.Serializer):
    """What ``units/{id}/derive-cv`` takes: an optional test frequency and the junction model."""

    frequency_hz = FiniteFloatField(
        required=False,
        validators=[positive("frequency_hz")],
        help_text="Test frequency of the C–V [Hz]; default: lowest SRF of the series / 10, "
        "rounded down to 1-2-5.",
    )
    model = serializers.ChoiceField(choices=MODEL_CHOICES, default="auto")


class QueryFrequencySerializer(serializers.Serializer):
    frequency_hz = FiniteFloatField(validators=[positive("frequency_hz")], help_text="[Hz]")


class UnitQSerializer(serializers.Serializer):
    """Q and Ceff of a unit against reverse bias at one frequency, from its R–L–C fits."""

    frequency_hz = serializers.FloatField(help_text="[Hz]")
    bias_v = serializers.ListField(child=serializers.FloatField(), help_text="Reverse bias [V].")
    q = serializers.ListField(child=serializers.FloatField(allow_null=True), help_text="|X|/Rs.")
    capacitance_f = serializers.ListField(
        child=serializers.FloatField(allow_null=True),
        help_text="Ceff = −1/(2πf·X) [F]; null where the unit is inductive.",
    )

    def to_representation(self, instance):
        return json_safe(super().to_representation(instance))
