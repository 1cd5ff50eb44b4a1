"""Write audit events. Called by the model signals and by code that changes rows in bulk."""

from __future__ import annotations

import datetime as dt
import decimal
import json
import uuid

from django.db import models

from labdb.audit.context import current_user, current_via
from labdb.audit.models import Action, AuditEvent

#: A JSON value longer than this is summarised instead of copied (points, bands, evidence).
MAX_VALUE_CHARS = 400


def plain(value):
    """A JSON-safe, bounded copy of a field value for the ``changes`` column."""
    if value is None or isinstance(value, bool | int | str):
        return value[:MAX_VALUE_CHARS] if isinstance(value, str) else value
    if isinstance(value, float):
        return value if value == value and abs(value) != float("inf") else str(value)
    if isinstance(value, dt.datetime | dt.date | dt.time):
        return value.isoformat()
    if isinstance(value, decimal.Decimal | uuid.UUID):
        return str(value)
    if isinstance(value, models.Model):
        return value.pk
    if hasattr(value, "name") and hasattr(value, "storage"):  # a FieldFile
        return value.name or ""
    try:
        text = json.dumps(value, default=str)
    except (TypeError, ValueError):
        text = str(value)
        return text[:MAX_VALUE_CHARS]
    if len(text) > MAX_VALUE_CHARS:
        return f"(not copied: {len(text)} characters of JSON)"
    return json.loads(text)


def label_of(model_or_obj) -> str:
    """``app_label.model`` of a model class or instance, e.g. ``catalog.part``."""
    return model_or_obj._meta.label_lower


def record_event(
    action: str,
    obj: models.Model,
    *,
    actor=None,
    summary: str = "",
    changes: dict | None = None,
) -> AuditEvent:
    """Append one event about ``obj``.

    Parameters
    ----------
    action : {"created", "changed", "archived", "reviewed", "deleted"}
        What happened.
    obj : Model
        The record it happened to (its type and primary key are kept, not a foreign key,
        so the event outlives a deleted row).
    actor : User or None
        Who did it; None falls back to the user of the request being served, then to
        nobody (a command or a background job).
    summary : str
        One line for people; defaults to "<action> <object>".
    changes : dict or None
        Field → value (created) or field → [old, new] (changed), already JSON-safe.

    Returns
    -------
    AuditEvent
        The stored event.
    """
    event = build_event(action, obj, actor=actor, summary=summary, changes=changes)
    event.save()
    return event


def build_event(
    action: str,
    obj: models.Model,
    *,
    actor=None,
    summary: str = "",
    changes: dict | None = None,
) -> AuditEvent:
    """The unsaved event :func:`record_event` would store (bulk writers save many at once)."""
    if action not in Action.values:
        raise ValueError(f"unknown audit action {action!r}; use one of {Action.values}")
    if actor is None or not getattr(actor, "is_authenticated", False):
        actor = current_user()
    text = summary or f"{action} {obj._meta.verbose_name} {obj}"
    return AuditEvent(
        actor=actor,
        actor_name=actor.get_username() if actor is not None else "",
        action=action,
        object_type=label_of(obj),
        object_id=str(obj.pk),
        summary=text[:300],
        changes=changes or {},
        via=current_via(),
    )


def record_created_many(objs, *, actor=None) -> None:
    """One "created" event per row inserted by ``bulk_create`` (which sends no signals).

    The events are the ones the model signals would have written row by row.
    """
    from labdb.audit.signals import created_changes, stated_actor

    AuditEvent.objects.bulk_create(
        [
            build_event(
                Action.CREATED,
                obj,
                actor=actor or stated_actor(obj),
                changes=created_changes(type(obj), obj),
            )
            for obj in objs
        ]
    )
