"""Write the whole lab (database rows and raw files, with a checksum manifest) to one zip."""

from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from labdb.jobs.services.backup import BackupError, dump_lab


class Command(BaseCommand):
    help = "Back up the database and every raw sweep file to one zip archive (see restore_lab)."

    def add_arguments(self, parser):
        parser.add_argument("path", help="the archive to write, e.g. labdb-2026-01-31.zip")

    def handle(self, *args, **opts):
        try:
            report = dump_lab(opts["path"])
        except BackupError as exc:
            raise CommandError(str(exc)) from None
        self.stdout.write(
            f"wrote {report.path}: {report.rows} rows, {report.files} raw files, {report.bytes} bytes"
        )
        for note in report.notes:
            self.stdout.write(f"note: {note}")
