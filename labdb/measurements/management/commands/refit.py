"""Refit current sweeps; a new fit version is written only where something changed."""

from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError
from tqdm import tqdm

from labdb.measurements.models import Sweep
from labdb.measurements.services import refit_sweeps


class Command(BaseCommand):
    help = "Refit sweeps with the current fitter (all, or by part/lot/sweep id)."

    def add_arguments(self, parser):
        parser.add_argument("--part", help="part number")
        parser.add_argument("--lot", help="lot code (with --part)")
        parser.add_argument("--sweep", type=int, action="append", help="sweep id (repeatable)")
        parser.add_argument("--model", default="auto", choices=["auto", "junction", "junction+cp"])
        parser.add_argument("--no-progress", action="store_true")

    def handle(self, *args, **opts):
        qs = Sweep.objects.filter(archived=False)
        if opts["part"]:
            qs = qs.filter(unit__lot__part__part_number=opts["part"])
        if opts["lot"]:
            if not opts["part"]:
                raise CommandError("--lot needs --part (lot codes are unique per part)")
            qs = qs.filter(unit__lot__code=opts["lot"])
        if opts["sweep"]:
            qs = qs.filter(pk__in=opts["sweep"])
        ids = list(qs.values_list("pk", flat=True))
        bar = tqdm(total=len(ids), unit="sweep", disable=opts["no_progress"], file=self.stderr._out)
        summary = refit_sweeps(
            ids, model=opts["model"], origin="refit", progress=lambda n: bar.update(n - bar.n)
        )
        bar.close()
        for label, n in summary.as_rows():
            self.stdout.write(f"{label:<14} {n:>7}")
        for pk, why in summary.failed:
            self.stdout.write(f"failed sweep {pk}: {why}")
