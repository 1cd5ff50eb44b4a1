"""Lots edited by hand (receipt date, archived) get their quality recomputed after commit.

Summaries carry copies of the receipt date, and the lots' received order is the time axis
of the between-lot checks, so a corrected date or an archived lot changes both.
"""

from __future__ import annotations

from django.db import transaction
from django.db.models.signals import post_save, pre_save
from django.dispatch import receiver

from labdb.catalog.models import Lot

_WATCHED = ("received_on", "archived")


@receiver(pre_save, sender=Lot, dispatch_uid="quality-lot-before")
def _remember(sender, instance: Lot, raw=False, **kwargs) -> None:
    if raw or instance.pk is None or instance._state.adding:
        return
    instance._quality_before = Lot.objects.filter(pk=instance.pk).values_list(*_WATCHED).first()


@receiver(post_save, sender=Lot, dispatch_uid="quality-lot-after")
def _recompute_if_moved(sender, instance: Lot, created=False, raw=False, **kwargs) -> None:
    before = getattr(instance, "_quality_before", None)
    instance._quality_before = None
    if raw or created or before is None:
        return
    if before != tuple(getattr(instance, name) for name in _WATCHED):
        from labdb.quality.hooks import lots_changed

        pk = instance.pk
        transaction.on_commit(lambda: lots_changed([pk]))
