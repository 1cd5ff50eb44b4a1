"""Model signals that write the audit trail for the lab's own records.

Saves through ``Model.save`` (pages, the API, the admin, the services) are caught here, so
no caller can forget them; bulk ``QuerySet.update`` bypasses signals, which is why the
admin's archive action saves row by row. Raw saves (``loaddata``, restores) are skipped.
"""

from __future__ import annotations

from django.apps import apps
from django.db.models.signals import post_delete, post_save, pre_save

from labdb.audit.models import Action
from labdb.audit.services import plain, record_event

#: Audited models. ``review_only``: only a person's review of the row is an event (flags
#: are written by the quality rules in bulk; their reviews are what people do to them).
AUDITED: dict[str, dict] = {
    "catalog.part": {},
    "catalog.lot": {},
    "catalog.unit": {},
    "measurements.fixture": {},
    "measurements.calibration": {},
    "measurements.sweep": {},
    "measurements.fit": {},
    "measurements.impedancefit": {},
    "quality.flag": {"review_only": True},
}

#: The event has its own time; these only repeat it.
SKIPPED_FIELDS = {"created_at", "updated_at"}
#: Fields that name who made a row, when the code that made it said so itself.
ACTOR_FIELDS = ("reviewed_by", "uploaded_by", "created_by")
REVIEW_FIELDS = {"state", "note", "reviewed_by"}


def _fields(model, only=None):
    for f in model._meta.concrete_fields:
        if f.primary_key or f.name in SKIPPED_FIELDS:
            continue
        if only is not None and f.name not in only and f.attname not in only:
            continue
        yield f


def created_changes(model, instance) -> dict:
    """What a "created" event records: every field with a value, JSON-safe."""
    return {
        f.name: plain(getattr(instance, f.attname))
        for f in _fields(model)
        if getattr(instance, f.attname) not in (None, "", [], {})
    }


def stated_actor(instance):
    for name in ACTOR_FIELDS:
        if getattr(instance, f"{name}_id", None) is not None:
            return getattr(instance, name)
    return None


def _before_save(sender, instance, raw=False, update_fields=None, **kwargs):
    instance._audit_before = None
    if raw or instance._state.adding or instance.pk is None:
        return
    names = [f.attname for f in _fields(sender, update_fields)]
    instance._audit_before = sender._base_manager.filter(pk=instance.pk).values(*names).first()


def _after_save(sender, instance, created, raw=False, update_fields=None, **kwargs):
    if raw:
        return
    options = AUDITED[sender._meta.label_lower]
    if created:
        if options.get("review_only"):
            return
        changes = created_changes(sender, instance)
        record_event(Action.CREATED, instance, actor=stated_actor(instance), changes=changes)
        return
    before = getattr(instance, "_audit_before", None)
    if before is None:
        return
    diff = {}
    for f in _fields(sender, update_fields):
        old, new = plain(before.get(f.attname)), plain(getattr(instance, f.attname))
        if old != new:
            diff[f.name] = [old, new]
    instance._audit_before = None
    if not diff:
        return
    if options.get("review_only"):
        if not REVIEW_FIELDS & diff.keys():
            return
        state = getattr(instance, "state", "")
        record_event(
            Action.REVIEWED,
            instance,
            actor=stated_actor(instance),
            summary=f"{state} {sender._meta.verbose_name} {instance}",
            changes=diff,
        )
        return
    action = Action.ARCHIVED if diff.get("archived", [None, None])[1] is True else Action.CHANGED
    record_event(action, instance, changes=diff)


def _after_delete(sender, instance, **kwargs):
    if not AUDITED[sender._meta.label_lower].get("review_only"):
        record_event(Action.DELETED, instance)


def connect() -> None:
    """Connect the signals for every audited model whose app is installed."""
    for label in AUDITED:
        app_label, model_name = label.split(".")
        if not apps.is_installed(f"labdb.{app_label}"):
            continue
        model = apps.get_model(app_label, model_name)
        pre_save.connect(_before_save, sender=model, dispatch_uid=f"audit-pre-{label}")
        post_save.connect(_after_save, sender=model, dispatch_uid=f"audit-post-{label}")
        post_delete.connect(_after_delete, sender=model, dispatch_uid=f"audit-del-{label}")
