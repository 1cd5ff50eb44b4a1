"""Restore a dump_lab archive into an empty, migrated database and the media storage."""

from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from labdb.jobs.services.backup import BackupError, restore_lab


class Command(BaseCommand):
    help = "Restore a dump_lab archive (checksums are verified before anything is written)."

    def add_arguments(self, parser):
        parser.add_argument("path", help="an archive written by dump_lab")

    def handle(self, *args, **opts):
        try:
            report = restore_lab(opts["path"])
        except BackupError as exc:
            raise CommandError(str(exc)) from None
        self.stdout.write(f"restored {report.path}: {report.rows} rows, {report.files} raw files")
