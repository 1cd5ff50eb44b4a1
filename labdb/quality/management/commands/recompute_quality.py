"""Recompute lot summaries, lot models and flags: every part, or the parts named."""

from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from labdb.catalog.models import Part
from labdb.quality.services import recompute_part


class Command(BaseCommand):
    help = (
        "Recompute lot summaries, lot-model fits and flags. Unchanged lots are skipped unless "
        "--force is given; reviews of flags are kept."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "--part",
            action="append",
            default=[],
            metavar="PART_NUMBER",
            help="only this part (repeat for several); default: every part",
        )
        parser.add_argument(
            "--force",
            action="store_true",
            help="rebuild every summary even when its inputs are unchanged",
        )

    def handle(self, *args, **opts):
        wanted = opts["part"]
        parts = Part.objects.order_by("part_number")
        if wanted:
            parts = parts.filter(part_number__in=wanted)
            missing = sorted(set(wanted) - set(parts.values_list("part_number", flat=True)))
            if missing:
                raise CommandError(
                    f"no part numbered {', '.join(missing)}; see the parts page for the numbers"
                )
        for part in parts:
            r = recompute_part(part, force=opts["force"])
            f = r.flags
            self.stdout.write(
                f"{part.part_number}: {r.summarised} summaries recomputed, {r.unchanged} unchanged, "
                f"{r.deleted} removed, {r.lot_fits} lot-model fits written; flags "
                f"{f.get('created', 0)} new, {f.get('updated', 0)} updated, "
                f"{f.get('deactivated', 0)} no longer firing, {f.get('reopened', 0)} reopened"
            )
            for failure in r.lot_fit_failures:
                self.stderr.write(f"  lot model not fitted: {failure}")
