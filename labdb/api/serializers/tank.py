"""Tank finder: the tank, band and bias supply (SI units), and the candidates' coverage."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from labdb.api.serializers.common import FiniteFloatField
from labdb.api.serializers.fits import FitParamsSerializer
from labdb.api.serializers.search import MAX_BIAS_V, MAX_CAPACITANCE_F, PartFilterParams
from labdb.search.queries import TankQuery

#: Bounds that keep the resonance arithmetic finite: 1 fH to 1 kH, 1 mHz to 1 THz.
MIN_INDUCTANCE_H, MAX_INDUCTANCE_H = 1e-15, 1e3
MIN_FREQUENCY_HZ, MAX_FREQUENCY_HZ = 1e-3, 1e12
MIN_COUPLING_F = 1e-18


class TankParams(PartFilterParams):
    """``TankQuery``: L ∥ C_fixed ∥ (junction, optionally through a coupling capacitor)."""

    inductance_h = FiniteFloatField(
        min_value=MIN_INDUCTANCE_H, max_value=MAX_INDUCTANCE_H, help_text="Tank inductance L [H]."
    )
    fixed_f = FiniteFloatField(
        required=False,
        min_value=0.0,
        max_value=MAX_CAPACITANCE_F,
        default=TankQuery.fixed_f,
        help_text="Fixed capacitance in parallel with the tank, strays included [F].",
    )
    coupling_f = FiniteFloatField(
        required=False,
        allow_null=True,
        default=None,
        min_value=MIN_COUPLING_F,
        max_value=MAX_CAPACITANCE_F,
        help_text="Series coupling capacitor to the junction [F]; leave out for none.",
    )
    f_low_hz = FiniteFloatField(
        min_value=MIN_FREQUENCY_HZ, max_value=MAX_FREQUENCY_HZ, help_text="Band, low edge [Hz]."
    )
    f_high_hz = FiniteFloatField(
        min_value=MIN_FREQUENCY_HZ, max_value=MAX_FREQUENCY_HZ, help_text="Band, high edge [Hz]."
    )
    bias_min_v = FiniteFloatField(
        required=False,
        max_value=MAX_BIAS_V,
        default=TankQuery.bias_min_v,
        help_text="Reverse bias available, low end [V] (default 0).",
    )
    bias_max_v = FiniteFloatField(
        max_value=MAX_BIAS_V, help_text="Reverse bias available, high end [V]."
    )
    max_parts = serializers.IntegerField(
        required=False,
        min_value=1,
        max_value=50,
        default=TankQuery.max_parts,
        help_text="Parts to shortlist and refine with their unit fits.",
    )


class CoverageSerializer(serializers.Serializer):
    """``labdb.physics.band_coverage`` of a lot's median unit over the bias supply."""

    f_min_hz = serializers.FloatField(help_text="Tank frequency at bias_min_v [Hz].")
    f_max_hz = serializers.FloatField(help_text="Tank frequency at bias_max_v [Hz].")
    covers = serializers.BooleanField(help_text="[f_low, f_high] lies inside [f_min, f_max].")
    bias_low_v = serializers.FloatField(
        allow_null=True, help_text="Bias giving the band's low edge [V]; null if unreachable."
    )
    bias_high_v = serializers.FloatField(
        allow_null=True, help_text="Bias giving the band's high edge [V]; null if unreachable."
    )
    centre_hz = serializers.FloatField(help_text="Geometric band centre √(f_low·f_high) [Hz].")
    slope_at_centre_hz_per_v = serializers.FloatField(
        allow_null=True, help_text="Tuning slope at the band centre [Hz/V]."
    )


class LotQSerializer(serializers.Serializer):
    """Q of the lot's impedance-measured units at the band centre, over the measured biases."""

    frequency_hz = serializers.FloatField()
    q_min = serializers.FloatField()
    q_max = serializers.FloatField()
    bias_min_v = serializers.FloatField()
    bias_max_v = serializers.FloatField()
    unit = serializers.CharField(help_text="The unit with the lowest Q.")
    n_units = serializers.IntegerField()


class TankLotSerializer(serializers.Serializer):
    """One counted lot of a candidate: the median unit's coverage and the spread of units."""

    lot = serializers.IntegerField(source="lot_id")
    code = serializers.CharField()
    received_on = serializers.DateField(allow_null=True)
    params = FitParamsSerializer(help_text="Median-unit junction parameters.")
    coverage = CoverageSerializer()
    margin = serializers.FloatField(
        allow_null=True,
        help_text="min(f_low/f(bias_min), f(bias_max)/f_high) of the median unit; ≥ 1 covers.",
    )
    n_units = serializers.IntegerField()
    n_covering = serializers.IntegerField(help_text="Units whose own fit covers the band.")
    fraction_covering = serializers.SerializerMethodField()
    worst = serializers.CharField(help_text="The unit with the least margin.")
    worst_f_hz = serializers.ListField(
        child=serializers.FloatField(),
        allow_null=True,
        help_text="That unit's (f at bias_min_v, f at bias_max_v) [Hz].",
    )
    worst_margin = serializers.FloatField(allow_null=True)
    extrapolated = serializers.BooleanField()
    q_at_centre = serializers.SerializerMethodField()

    def get_fraction_covering(self, lot) -> float | None:
        return lot.n_covering / lot.n_units if lot.n_units else None

    @extend_schema_field(LotQSerializer(allow_null=True))
    def get_q_at_centre(self, lot) -> dict | None:
        found = self.context.get("lot_q", {}).get(lot.lot_id)
        return LotQSerializer(found).data if found is not None else None


class WorstUnitSerializer(serializers.Serializer):
    lot = serializers.CharField(source="code", help_text="Lot code.")
    unit = serializers.CharField(source="worst")
    margin = serializers.FloatField(source="worst_margin")
    f_hz = serializers.ListField(
        source="worst_f_hz", child=serializers.FloatField(), allow_null=True
    )


class TankCandidateSerializer(serializers.Serializer):
    """A shortlisted part: its counted lots, worst first."""

    part = serializers.CharField(source="part_number", help_text="Part number.")
    part_id = serializers.IntegerField()
    kind = serializers.CharField()
    rated_reverse_v = serializers.FloatField(allow_null=True)
    worst_margin = serializers.FloatField(allow_null=True)
    n_lots_covering = serializers.IntegerField()
    n_units = serializers.IntegerField()
    n_units_covering = serializers.IntegerField()
    worst_unit = WorstUnitSerializer(allow_null=True, help_text="The unit with the least margin.")
    warnings = serializers.ListField(child=serializers.CharField())
    lots = TankLotSerializer(many=True)


class SuggestionSerializer(serializers.Serializer):
    part = serializers.CharField(source="part_number")
    lot_code = serializers.CharField()
    fixed_f = serializers.FloatField(
        allow_null=True, help_text="Fixed capacitance that centres the band [F]; null: see reason."
    )
    reason = serializers.CharField()


class TankResultSerializer(serializers.Serializer):
    """The tank finder's answer; ``refusal`` says why no lot covers (empty otherwise)."""

    n_parts = serializers.IntegerField(help_text="Parts judged.")
    n_lots = serializers.IntegerField(help_text="Counted lots judged.")
    n_parts_covering = serializers.IntegerField(
        help_text="Parts whose every counted lot's median unit covers the band."
    )
    suggestion = SuggestionSerializer(allow_null=True)
    refusal = serializers.CharField(allow_blank=True)
    warnings = serializers.ListField(child=serializers.CharField())
    query = TankParams(help_text="The query answered, defaults filled in.")
    candidates = TankCandidateSerializer(many=True)
