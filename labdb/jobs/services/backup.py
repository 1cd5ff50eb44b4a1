"""Back up and restore a whole lab: the database rows and every raw file, with checksums.

The archive is one zip file::

    MANIFEST.json   format, creation time, row counts, sha256 and size of every member
    db.json         Django's JSON serialization (as dumpdata writes it, natural keys, but with
                    full microseconds) of auth users/groups and every labdb app
    media/<name>    each sweep's raw file under its storage name

Job rows are left out: they describe work in flight, not the lab's data. For very large
installations prefer pg_dump and the object store's own versioning (deploy/SCALING.md).
"""

from __future__ import annotations

import datetime
import hashlib
import json
import tempfile
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

from django.apps import apps
from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group
from django.core import serializers
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage
from django.core.management import call_command
from django.core.serializers.json import DjangoJSONEncoder
from django.db import transaction
from django.utils import timezone

FORMAT = "labdb-dump/1"
MANIFEST = "MANIFEST.json"
DB_MEMBER = "db.json"
MEDIA_PREFIX = "media/"
_CHUNK = 1 << 20
SKIPPED_APPS = {"jobs"}


class BackupError(Exception):
    """A dump or restore that cannot go on; the message names the archive member or row."""


@dataclass
class BackupReport:
    """What a dump wrote or a restore read."""

    path: str
    rows: int = 0
    files: int = 0
    bytes: int = 0
    notes: list[str] = field(default_factory=list)


class LosslessEncoder(DjangoJSONEncoder):
    """DjangoJSONEncoder keeps only milliseconds of a time; a backup keeps every microsecond."""

    def default(self, o):
        if isinstance(o, datetime.datetime | datetime.time):
            return o.isoformat()
        return super().default(o)


def dumped_models() -> list:
    """Models in the dump, ordered so natural keys resolve: auth, then every labdb app."""
    chosen = [(apps.get_app_config("auth"), [Group, get_user_model()])]
    for cfg in apps.get_app_configs():
        if cfg.name.startswith("labdb.") and cfg.label not in SKIPPED_APPS:
            models = list(cfg.get_models())
            if models:
                chosen.append((cfg, models))
    return serializers.sort_dependencies(chosen, allow_cycles=True)


def _rows(models):
    for model in models:
        yield from model._base_manager.order_by(model._meta.pk.name).iterator(chunk_size=2000)


def _copy(src, dst) -> tuple[str, int]:
    h, n = hashlib.sha256(), 0
    while chunk := src.read(_CHUNK):
        h.update(chunk)
        dst.write(chunk)
        n += len(chunk)
    return h.hexdigest(), n


def dump_lab(path: str | Path) -> BackupReport:
    """Write the database and every raw file to one zip archive at ``path``."""
    from labdb.measurements.models import Sweep

    path = Path(path)
    report = BackupReport(str(path))
    entries: dict[str, dict] = {}
    with tempfile.TemporaryDirectory() as tmp:
        db_file = Path(tmp) / DB_MEMBER
        # One snapshot: rows and the list of raw files come from the same transaction.
        with transaction.atomic():
            with open(db_file, "w", encoding="utf-8") as out:
                serializers.serialize(
                    "json",
                    _rows(dumped_models()),
                    stream=out,
                    use_natural_foreign_keys=True,
                    use_natural_primary_keys=True,
                    cls=LosslessEncoder,
                )
            raws = list(Sweep.objects.order_by("pk").values_list("raw_file", "raw_sha256"))
        report.rows = len(json.loads(db_file.read_text()))
        with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, allowZip64=True) as zf:
            with open(db_file, "rb") as src, zf.open(DB_MEMBER, "w", force_zip64=True) as dst:
                sha, size = _copy(src, dst)
            entries[DB_MEMBER] = {"sha256": sha, "size": size}
            for name, expected in dict(raws).items():
                member = MEDIA_PREFIX + name
                try:
                    with (
                        default_storage.open(name, "rb") as src,
                        zf.open(member, "w", force_zip64=True) as dst,
                    ):
                        sha, size = _copy(src, dst)
                except FileNotFoundError:
                    raise BackupError(f"raw file {name!r} is missing from storage") from None
                if sha != expected:
                    report.notes.append(f"{name}: stored bytes differ from the sweep's sha256")
                entries[member] = {"sha256": sha, "size": size}
                report.files += 1
                report.bytes += size
            manifest = {
                "format": FORMAT,
                "created_at": timezone.now().isoformat(),
                "rows": report.rows,
                "members": entries,
            }
            zf.writestr(MANIFEST, json.dumps(manifest, indent=1, sort_keys=True))
    return report


def _verify(zf: zipfile.ZipFile) -> dict:
    try:
        manifest = json.loads(zf.read(MANIFEST))
    except KeyError:
        raise BackupError(f"{zf.filename}: no {MANIFEST}; not a labdb dump") from None
    if manifest.get("format") != FORMAT:
        raise BackupError(f"{zf.filename}: format {manifest.get('format')!r}, expected {FORMAT}")
    bad = []
    for member, want in manifest["members"].items():
        try:
            with zf.open(member) as src:
                sha, size = _copy(src, _Sink())
        except KeyError:
            bad.append(f"{member}: missing")
            continue
        if (sha, size) != (want["sha256"], want["size"]):
            bad.append(f"{member}: checksum differs from the manifest")
    if bad:
        raise BackupError(f"{zf.filename}: damaged archive: " + "; ".join(bad[:20]))
    return manifest


class _Sink:
    def write(self, data: bytes) -> None:
        pass


def restore_lab(path: str | Path) -> BackupReport:
    """Restore a dump into an empty, migrated database and the configured media storage.

    Every member is checked against the manifest before anything is written.
    """
    from labdb.measurements.models import Sweep

    path = Path(path)
    if not path.is_file():
        raise BackupError(f"{path}: no such file")
    report = BackupReport(str(path))
    if Sweep.objects.exists():
        raise BackupError(
            "the database already holds sweeps; restore into an empty database "
            "(create it, run `manage.py migrate`, then restore)"
        )
    with zipfile.ZipFile(path) as zf:
        manifest = _verify(zf)
        for member in manifest["members"]:
            if not member.startswith(MEDIA_PREFIX):
                continue
            name = member[len(MEDIA_PREFIX) :]
            data = zf.read(member)
            if default_storage.exists(name):
                with default_storage.open(name, "rb") as fh:
                    if fh.read() != data:
                        raise BackupError(f"{name}: a different file already exists in storage")
                continue
            saved = default_storage.save(name, ContentFile(data))
            if saved != name:
                raise BackupError(f"{name}: storage saved it as {saved!r}")
            report.files += 1
            report.bytes += len(data)
        with tempfile.TemporaryDirectory() as tmp:
            db_file = Path(tmp) / DB_MEMBER
            db_file.write_bytes(zf.read(DB_MEMBER))
            with transaction.atomic():
                call_command("loaddata", str(db_file), verbosity=0)
    report.rows = manifest["rows"]
    return report
