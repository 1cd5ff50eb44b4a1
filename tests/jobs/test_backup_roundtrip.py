"""dump_lab / restore_lab: a database and its raw files come back byte for byte."""

from __future__ import annotations

import hashlib
import zipfile

import pytest
from django.core.files.storage import default_storage
from django.core.management import CommandError, call_command

from labdb.jobs.services.backup import BackupError, restore_lab
from labdb.measurements.models import Fit, Sweep
from labdb.measurements.services import SweepContext, fit_sweep, record_file


def _snapshot():
    sweeps = {}
    for s in Sweep.objects.order_by("pk"):
        with default_storage.open(s.raw_file.name, "rb") as fh:
            disk = hashlib.sha256(fh.read()).hexdigest()
        sweeps[s.pk] = (s.raw_file.name, s.raw_sha256, disk, s.points, s.current_fit_id)
    # Users travel by natural key (user name), so their ids may differ after a restore into a
    # database whose id sequences moved on (PostgreSQL keeps them past rolled-back tests).
    fits = {
        f["id"]: f
        for f in Fit.objects.order_by("pk").values(
            *[x.attname for x in Fit._meta.concrete_fields if x.name != "created_by"],
            "created_by__username",
        )
    }
    return sweeps, fits


def _empty_database():
    """``flush``, as an operator would before a restore, from inside the test's transaction."""
    from django.db import connection

    postgres = connection.vendor == "postgresql"
    if postgres:
        # flush TRUNCATEs; PostgreSQL refuses that while deferred foreign-key checks of the
        # still-open test transaction are pending, so settle them first, and defer them
        # again afterwards (a restore loads rows whose keys point at each other).
        with connection.cursor() as cursor:
            cursor.execute("SET CONSTRAINTS ALL IMMEDIATE")
    call_command("flush", interactive=False, verbosity=0)
    if postgres:
        with connection.cursor() as cursor:
            cursor.execute("SET CONSTRAINTS ALL DEFERRED")


@pytest.fixture
def lab(bench, member, make_cv):
    for i in range(3):
        record_file(
            make_cv(cjo=(30 + 5 * i) * 1e-12, unit=f"U{i}"),
            f"u{i}.csv",
            SweepContext(),
            user=member,
        )
    fit_sweep(Sweep.objects.first(), model="junction+cp", user=member)  # a version 2
    return bench


def test_a_dump_restores_every_row_and_raw_file_losslessly(lab, tmp_path, settings):
    before = _snapshot()
    assert len(before[0]) == 3 and len(before[1]) == 4
    archive = tmp_path / "lab.zip"
    call_command("dump_lab", str(archive), stdout=open(tmp_path / "out.txt", "w"))

    _empty_database()
    settings.MEDIA_ROOT = tmp_path / "fresh-media"  # a new, empty storage
    assert not Sweep.objects.exists() and not Fit.objects.exists()

    call_command("restore_lab", str(archive), stdout=open(tmp_path / "out2.txt", "w"))
    after = _snapshot()
    assert after[0] == before[0]
    for pk, row in before[1].items():
        for key, value in row.items():
            assert after[1][pk][key] == value, (pk, key)
    assert after == before
    # Every raw file's bytes hash to the sweep's recorded sha256.
    assert all(raw_sha == disk_sha for _, raw_sha, disk_sha, _, _ in after[0].values())


def test_a_damaged_archive_is_refused_before_anything_is_written(lab, tmp_path, settings):
    archive = tmp_path / "lab.zip"
    call_command("dump_lab", str(archive), stdout=open(tmp_path / "out.txt", "w"))
    damaged = tmp_path / "damaged.zip"
    with zipfile.ZipFile(archive) as src, zipfile.ZipFile(damaged, "w") as dst:
        for info in src.infolist():
            data = src.read(info)
            if info.filename.startswith("media/") and info.filename.endswith("u1.csv"):
                data = data.replace(b"25 ", b"26 ", 1)
            dst.writestr(info, data)
    _empty_database()
    settings.MEDIA_ROOT = tmp_path / "fresh-media"
    with pytest.raises(BackupError, match=r"u1\.csv: checksum differs"):
        restore_lab(damaged)
    assert not Sweep.objects.exists()
    assert not (tmp_path / "fresh-media").exists()


def test_it_refuses_to_restore_over_a_lab_that_has_sweeps(lab, tmp_path):
    archive = tmp_path / "lab.zip"
    call_command("dump_lab", str(archive), stdout=open(tmp_path / "out.txt", "w"))
    with pytest.raises(CommandError, match="already holds sweeps"):
        call_command("restore_lab", str(archive))
