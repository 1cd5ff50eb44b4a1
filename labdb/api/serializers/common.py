"""Pieces the resource serializers share: finite floats, JSON-safe output, model constraints."""

from __future__ import annotations

import copy
import math
from typing import Any

from django.core.exceptions import NON_FIELD_ERRORS
from django.core.exceptions import ValidationError as DjangoValidationError
from rest_framework import serializers
from rest_framework.settings import api_settings


class FiniteFloatField(serializers.FloatField):
    """A float that must be finite (a form field may carry 'nan' or 'inf' as text)."""

    default_error_messages = {"finite": "must be a finite number"}

    def to_internal_value(self, data):
        value = super().to_internal_value(data)
        if not math.isfinite(value):
            self.fail("finite")
        return value


def json_safe(obj: Any) -> Any:
    """Copy of ``obj`` with non-finite floats replaced by None (JSON has no NaN)."""
    if isinstance(obj, dict):
        return {k: json_safe(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [json_safe(v) for v in obj]
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def positive(field: str):
    """A validator refusing values ≤ 0, naming the field and its unit in the message."""

    def check(value):
        if value is not None and not value > 0:
            raise serializers.ValidationError(f"{field} must be greater than 0")

    return check


class ModelConstraintsMixin:
    """Check the model's database constraints before saving, so a breach is a 400, not a 500.

    Field validators give the precise messages; this is the backstop for constraints that
    span fields (ordered windows, uniqueness).
    """

    constraint_messages: dict[str, tuple[str | None, str]] = {}

    def validate(self, attrs):
        attrs = super().validate(attrs)
        model = self.Meta.model
        instance = copy.copy(self.instance) if self.instance is not None else model()
        for key, value in attrs.items():
            setattr(instance, key, value)
        try:
            instance.validate_constraints()
        except DjangoValidationError as exc:
            raise serializers.ValidationError(self._explain(exc)) from None
        return attrs

    def _explain(self, exc: DjangoValidationError) -> dict[str, list[str]]:
        out: dict[str, list[str]] = {}
        for field, messages in exc.message_dict.items():
            for message in messages:
                key = api_settings.NON_FIELD_ERRORS_KEY if field == NON_FIELD_ERRORS else field
                text = message
                for name, (target, explanation) in self.constraint_messages.items():
                    if name in message:
                        key, text = target or field, explanation
                out.setdefault(key, []).append(text)
        return out


class NamedChoiceField(serializers.ChoiceField):
    """A choice field whose OpenAPI enum is the component ``enum_name``.

    Two resources may share a field name with different choice sets (a flag's ``state`` and
    a job's ``state``); naming the enum here keeps drf-spectacular from guessing a name.
    """

    def __init__(self, *args, enum_name: str, **kwargs):
        self.enum_name = enum_name
        super().__init__(*args, **kwargs)
