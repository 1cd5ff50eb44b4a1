"""Import sweep files, folders and zip archives from a bench PC."""

from __future__ import annotations

from datetime import datetime
from pathlib import Path

from django.core.management.base import BaseCommand, CommandError
from tqdm import tqdm

from labdb.measurements.services import SweepContext, import_files
from labdb.measurements.services.manifest import context_for_member

SWEEP_SUFFIXES = {".csv", ".tsv", ".txt", ".dat", ".xlsx", ".zip"}


def collect(paths: list[str]) -> list[Path]:
    files: list[Path] = []
    for raw in paths:
        p = Path(raw)
        if p.is_dir():
            files += sorted(
                f for f in p.rglob("*") if f.is_file() and f.suffix.lower() in SWEEP_SUFFIXES
            )
        elif p.is_file():
            files.append(p)
        else:
            raise CommandError(f"{raw}: no such file or folder")
    return files


class Command(BaseCommand):
    help = "Import sweep files (CSV/TSV/TXT, .xlsx, .zip with manifest.csv) and fit each one."

    def add_arguments(self, parser):
        parser.add_argument("paths", nargs="+", help="files, folders or .zip archives")
        parser.add_argument(
            "--manifest", help="a manifest CSV for loose files (file, part, lot, unit, …)"
        )
        parser.add_argument("--part")
        parser.add_argument("--lot")
        parser.add_argument("--unit")
        parser.add_argument("--fixture")
        parser.add_argument("--kind", choices=["cv", "fv"])
        parser.add_argument("--temperature", type=float, dest="temperature_c", help="°C")
        parser.add_argument("--illumination", choices=["dark", "ambient", "illuminated"])
        parser.add_argument("--measured-at", type=datetime.fromisoformat, dest="measured_at")
        parser.add_argument("--operator")
        parser.add_argument("--model", default="auto", choices=["auto", "junction", "junction+cp"])
        parser.add_argument("--no-progress", action="store_true")

    def handle(self, *args, **opts):
        files = collect(opts["paths"])
        ctx = SweepContext(
            **{
                k: opts[k]
                for k in (
                    "part",
                    "lot",
                    "unit",
                    "fixture",
                    "kind",
                    "temperature_c",
                    "illumination",
                    "measured_at",
                    "operator",
                    "model",
                )
            }
        )
        rows_by_name = self._manifest(opts.get("manifest"))

        def items():
            for path in files:
                file_ctx = ctx
                if rows_by_name:
                    file_ctx = context_for_member(ctx, rows_by_name.get(path.name))
                yield path.read_bytes(), str(path), file_ctx

        bar = tqdm(
            total=len(files), unit="file", disable=opts["no_progress"], file=self.stderr._out
        )
        results = import_files(items(), origin="command", progress=lambda n: bar.update(n - bar.n))
        bar.close()
        self._report(results)
        rejected = sum(o.status == "rejected" for o in results)
        if rejected:
            raise CommandError(f"{rejected} sweep(s) rejected")

    def _manifest(self, path: str | None) -> dict:
        if not path:
            return {}
        import csv

        with open(path, newline="", encoding="utf-8-sig") as fh:
            rows = list(csv.DictReader(fh))
        if not rows or "file" not in rows[0]:
            raise CommandError(f"{path}: a manifest needs a header row with a 'file' column")
        return {Path(r["file"]).name: r for r in rows}

    def _report(self, results) -> None:
        counts = {
            s: sum(o.status == s for o in results) for s in ("stored", "duplicate", "rejected")
        }
        self.stdout.write(f"{'result':<10} {'count':>6}")
        for status, n in counts.items():
            self.stdout.write(f"{status:<10} {n:>6}")
        for o in results:
            if o.status == "rejected":
                self.stdout.write(f"rejected  {o.source}: " + "; ".join(map(str, o.problems)))
