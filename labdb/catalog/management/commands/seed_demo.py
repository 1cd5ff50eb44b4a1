"""Load the invented demo scenario from fixtures/demo through the real import path."""

from __future__ import annotations

import json
import secrets
from datetime import date, datetime
from pathlib import Path

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError
from django.db import transaction

from labdb.accounts.roles import CURATOR, MEMBER, VIEWER
from labdb.accounts.services import ensure_user
from labdb.catalog.models import Lot, Part
from labdb.ingest import ParseError, parse_calibration
from labdb.measurements.models import Calibration, Fixture
from labdb.measurements.services import (
    SweepContext,
    import_files,
    record_calibration,
    record_file,
)

DEMO_DIR = settings.BASE_DIR / "fixtures" / "demo"


def demo_password() -> str:
    """A password generated once per checkout and kept under var/ (git-ignored)."""
    path = Path(settings.VAR_DIR) / "demo-password"
    if not path.exists():
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(secrets.token_urlsafe(9))
    return path.read_text().strip()


class Command(BaseCommand):
    help = (
        "Create the invented demo lab (parts, lots, fixtures, calibrations, sweeps) and demo users."
    )

    def add_arguments(self, parser):
        parser.add_argument("--path", default=str(DEMO_DIR), help="folder holding catalog.json")
        parser.add_argument("--no-users", action="store_true", help="do not create demo users")

    def handle(self, *args, **opts):
        root = Path(opts["path"])
        catalog_file = root / "catalog.json"
        if not catalog_file.exists():
            raise CommandError(
                f"{catalog_file} not found; run `python fixtures/make_demo.py` first"
            )
        catalog = json.loads(catalog_file.read_text(encoding="utf-8"))
        with transaction.atomic():
            self._catalog(catalog)
            self._calibrations(root, catalog)
        stats = self._sweeps(root / catalog.get("sweeps_dir", "sweeps"))
        self.stdout.write(
            f"demo sweeps: {stats['stored']} stored, {stats['duplicate']} already there, "
            f"{stats['rejected']} rejected"
        )
        if stats["rejected"]:
            raise CommandError("some demo files were rejected; see above")
        if catalog.get("impedance_dir"):
            self._impedance(root / catalog["impedance_dir"])
        if not opts["no_users"]:
            password = demo_password()
            ensure_user("demo", CURATOR, password, staff=True)
            ensure_user("demo-member", MEMBER, password)
            ensure_user("demo-viewer", VIEWER, password)
            self.stdout.write(
                f"demo login: user 'demo' (curator), password '{password}' "
                "(also 'demo-member' and 'demo-viewer' with the same password)"
            )

    def _catalog(self, catalog: dict) -> None:
        for p in catalog["parts"]:
            Part.objects.update_or_create(
                part_number=p["part_number"],
                defaults={
                    "kind": p["kind"],
                    "description": p.get("description", ""),
                    "manufacturer": p.get("manufacturer", ""),
                    "rated_reverse_v": p.get("rated_reverse_v"),
                    "ref_bias_low_v": p.get("reference_bias_low_v"),
                    "ref_bias_high_v": p.get("reference_bias_high_v"),
                },
            )
        for lot in catalog["lots"]:
            Lot.objects.update_or_create(
                part=Part.objects.get(part_number=lot["part"]),
                code=lot["code"],
                defaults={
                    "date_code": lot.get("date_code", ""),
                    "received_on": date.fromisoformat(lot["received_on"])
                    if lot.get("received_on")
                    else None,
                    "source": lot.get("source", ""),
                },
            )
        for f in catalog["fixtures"]:
            Fixture.objects.update_or_create(
                name=f["name"],
                defaults={
                    k: f.get(k)
                    for k in (
                        "kind",
                        "test_frequency_hz",
                        "test_level_v",
                        "nominal_inductance_h",
                        "coupling_f",
                    )
                }
                | {"description": f.get("description", "")},
            )

    def _calibrations(self, root: Path, catalog: dict) -> None:
        for c in catalog.get("calibrations", []):
            fixture = Fixture.objects.get(name=c["fixture"])
            at = datetime.fromisoformat(c["measured_at"])
            if Calibration.objects.filter(fixture=fixture, measured_at=at).exists():
                continue
            path = root / c["file"]
            try:
                parsed = parse_calibration(path.read_bytes(), path.name)
            except ParseError as exc:
                raise CommandError(f"{path}: {exc}") from None
            record_calibration(
                fixture,
                at,
                list(parsed.ref_capacitance_f),
                list(parsed.freq_hz),
                notes="invented demo data",
            )

    def _impedance(self, folder: Path) -> None:
        """Impedance sweeps (.s1p), then each measured unit's C–V derived from its bias series."""
        from labdb.measurements.services.bias_series import derive_cv_from_bias_series

        stats = {"stored": 0, "duplicate": 0, "rejected": 0}
        units = {}
        for path in sorted(folder.rglob("*.s1p")):
            rel = str(path.relative_to(folder))
            for outcome in record_file(path.read_bytes(), rel, origin="command", recompute=False):
                stats[outcome.status] += 1
                if outcome.status == "rejected":
                    self.stderr.write(f"rejected {rel}: " + "; ".join(map(str, outcome.problems)))
                else:
                    units[outcome.sweep.unit_id] = outcome.sweep.unit
        if stats["rejected"]:
            raise CommandError("some demo impedance files were rejected; see above")
        derived = [
            o for u in units.values() for o in derive_cv_from_bias_series(u, origin="command")
        ]
        bad = [o for o in derived if o.status == "rejected"]
        for o in bad:
            self.stderr.write(f"no C–V from {o.source}: " + "; ".join(map(str, o.problems)))
        self.stdout.write(
            f"demo impedance sweeps: {stats['stored']} stored, {stats['duplicate']} already there; "
            f"C–V derived from {sum(o.status == 'stored' for o in derived)} bias series"
        )
        if bad:
            raise CommandError("a demo bias series gave no C–V; see above")

    def _sweeps(self, folder: Path) -> dict:
        stats = {"stored": 0, "duplicate": 0, "rejected": 0}
        paths = sorted(p for p in folder.rglob("*") if p.is_file())
        items = ((p.read_bytes(), str(p.relative_to(folder)), SweepContext()) for p in paths)
        for outcome in import_files(items, origin="command"):
            stats[outcome.status] += 1
            if outcome.status == "rejected":
                self.stderr.write(
                    f"rejected {outcome.source}: " + "; ".join(map(str, outcome.problems))
                )
        return stats
