"""Query filters (django-filter) for the list endpoints; numbers in SI, biases reverse-positive."""

from __future__ import annotations

import datetime as dt

from django import forms
from django_filters import rest_framework as filters
from django_filters.widgets import BooleanWidget
from rest_framework.exceptions import ValidationError

from labdb.catalog.models import Lot, Part, PartKind, Unit
from labdb.measurements.models import (
    Calibration,
    Fit,
    Fixture,
    FixtureKind,
    Illumination,
    Sweep,
    SweepKind,
)
from labdb.quality.models import Flag, FlagState
from labdb.quality.services.rules import RULES

# Ids beyond a signed 64-bit integer cannot exist; refusing them keeps the database driver
# from ever seeing an out-of-range number.
_ID_LIMITS = {"min_value": 1, "max_value": 2**63 - 1}


class UtcDateTimeFilter(filters.IsoDateTimeFilter):
    """An ISO 8601 time, compared in UTC.

    Python accepts UTC offsets up to ±24 h but PostgreSQL only ±15:59, so the value is
    converted to UTC before it reaches the database; a time that cannot be (its UTC
    equivalent falls outside years 1–9999) is refused with a 400 naming the parameter.
    """

    def filter(self, qs, value):
        if value is not None and value.tzinfo is not None:
            try:
                value = value.astimezone(dt.UTC)
            except OverflowError:
                raise ValidationError(
                    {self.field_name: "this time is out of range once converted to UTC"}
                ) from None
        return super().filter(qs, value)


class IdFilter(filters.NumberFilter):
    field_class = forms.IntegerField

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **{**_ID_LIMITS, **kwargs})


class FiniteNumberFilter(filters.NumberFilter):
    """A decimal number within ±1e12 (plenty for volts and degrees Celsius)."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **{"min_value": -1e12, "max_value": 1e12, **kwargs})


class _StrictBooleanWidget(BooleanWidget):
    """true/false/1/0 as booleans; any other non-empty text passes on to be refused."""

    def value_from_datadict(self, data, files, name):
        value = super().value_from_datadict(data, files, name)
        raw = data.get(name)
        return raw if value is None and raw not in (None, "") else value


class _StrictBooleanField(forms.NullBooleanField):
    def to_python(self, value):
        if value is True or value is False or value in (None, ""):
            return None if value == "" else value
        raise forms.ValidationError("use true or false", code="invalid")


class StrictBooleanFilter(filters.BooleanFilter):
    """A yes/no filter that refuses other values instead of silently ignoring them."""

    field_class = _StrictBooleanField

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **{"widget": _StrictBooleanWidget, **kwargs})


class PartFilter(filters.FilterSet):
    part_number = filters.CharFilter(lookup_expr="icontains", help_text="part of the number")
    kind = filters.ChoiceFilter(choices=PartKind.choices)
    manufacturer = filters.CharFilter(lookup_expr="icontains")
    archived = filters.BooleanFilter()

    class Meta:
        model = Part
        fields = ["part_number", "kind", "manufacturer", "archived"]


class LotFilter(filters.FilterSet):
    part = filters.CharFilter(field_name="part__part_number", help_text="part number")
    code = filters.CharFilter()
    received_after = filters.DateFilter(field_name="received_on", lookup_expr="gte")
    received_before = filters.DateFilter(field_name="received_on", lookup_expr="lte")
    archived = filters.BooleanFilter()

    class Meta:
        model = Lot
        fields = ["part", "code", "received_after", "received_before", "archived"]


class UnitFilter(filters.FilterSet):
    lot = IdFilter(field_name="lot_id", help_text="lot id")
    part = filters.CharFilter(field_name="lot__part__part_number", help_text="part number")
    label = filters.CharFilter()
    archived = filters.BooleanFilter()

    class Meta:
        model = Unit
        fields = ["lot", "part", "label", "archived"]


class FixtureFilter(filters.FilterSet):
    name = filters.CharFilter(lookup_expr="icontains")
    kind = filters.ChoiceFilter(choices=FixtureKind.choices)
    archived = filters.BooleanFilter()

    class Meta:
        model = Fixture
        fields = ["name", "kind", "archived"]


class CalibrationFilter(filters.FilterSet):
    fixture = IdFilter(field_name="fixture_id", help_text="fixture id")
    measured_after = UtcDateTimeFilter(field_name="measured_at", lookup_expr="gte")
    measured_before = UtcDateTimeFilter(field_name="measured_at", lookup_expr="lte")

    class Meta:
        model = Calibration
        fields = ["fixture", "measured_after", "measured_before"]


class SweepFilter(filters.FilterSet):
    part = filters.CharFilter(field_name="unit__lot__part__part_number", help_text="part number")
    lot = IdFilter(field_name="unit__lot_id", help_text="lot id")
    unit = IdFilter(field_name="unit_id", help_text="unit id")
    fixture = IdFilter(field_name="fixture_id", help_text="fixture id")
    kind = filters.ChoiceFilter(choices=SweepKind.choices)
    illumination = filters.ChoiceFilter(choices=Illumination.choices)
    temperature_min = FiniteNumberFilter(field_name="temperature_c", lookup_expr="gte")
    temperature_max = FiniteNumberFilter(field_name="temperature_c", lookup_expr="lte")
    measured_after = UtcDateTimeFilter(field_name="measured_at", lookup_expr="gte")
    measured_before = UtcDateTimeFilter(field_name="measured_at", lookup_expr="lte")
    archived = filters.BooleanFilter()

    class Meta:
        model = Sweep
        fields = [
            "part",
            "lot",
            "unit",
            "fixture",
            "kind",
            "illumination",
            "temperature_min",
            "temperature_max",
            "measured_after",
            "measured_before",
            "archived",
        ]


class FitVersionFilter(filters.FilterSet):
    version = IdFilter(help_text="only this version")

    class Meta:
        model = Fit
        fields = ["version"]


class FlagFilter(filters.FilterSet):
    state = filters.ChoiceFilter(choices=FlagState.choices)
    active = StrictBooleanFilter(help_text="does the rule still fire on current data?")
    rule = filters.ChoiceFilter(choices=list(RULES.items()))
    part = filters.CharFilter(field_name="part__part_number", help_text="part number")
    lot = IdFilter(field_name="lot_id", help_text="lot id")
    unit = IdFilter(field_name="unit_id", help_text="unit id")

    class Meta:
        model = Flag
        fields = ["state", "active", "rule", "part", "lot", "unit"]
