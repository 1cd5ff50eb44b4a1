"""The bulk import command: folders and archives, a final table, non-zero exit on rejects."""

import io
import zipfile

import pytest
from django.core.management import CommandError, call_command

from labdb.measurements.models import Sweep

pytestmark = pytest.mark.django_db


def test_it_imports_a_folder_and_prints_counts(bench, make_cv, tmp_path, capsys):
    for i in range(3):
        (tmp_path / f"u{i}.csv").write_bytes(make_cv(unit=f"U{i}", cjo=(40 + i) * 1e-12))
    call_command("import_sweeps", str(tmp_path), "--no-progress")
    out = capsys.readouterr().out
    assert any(line.split() == ["stored", "3"] for line in out.splitlines())
    assert Sweep.objects.count() == 3


def test_it_exits_non_zero_when_anything_is_rejected(bench, make_cv, tmp_path, capsys):
    (tmp_path / "good.csv").write_bytes(make_cv())
    (tmp_path / "bad.csv").write_bytes(b"bias (V),C (pF)\n1,2\n")
    with pytest.raises(CommandError, match="1 sweep"):
        call_command("import_sweeps", str(tmp_path), "--no-progress")
    assert "bad.csv" in capsys.readouterr().out
    assert Sweep.objects.count() == 1


def test_it_imports_an_archive_with_a_manifest(bench, make_cv, tmp_path):
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("a.csv", make_cv(unit="X"))
        zf.writestr("b.csv", make_cv(unit="Y", cjo=60e-12))
        zf.writestr("manifest.csv", "file,unit\na.csv,A1\n")
    path = tmp_path / "batch.zip"
    path.write_bytes(buf.getvalue())
    call_command("import_sweeps", str(path), "--no-progress")
    labels = sorted(Sweep.objects.values_list("unit__label", flat=True))
    assert labels == ["A1", "Y"]  # the manifest row wins for a.csv; b.csv keeps its own


def test_command_line_values_win_over_file_metadata(bench, make_cv, tmp_path):
    (tmp_path / "u.csv").write_bytes(make_cv(unit="U1"))
    call_command("import_sweeps", str(tmp_path / "u.csv"), "--unit", "Z9", "--no-progress")
    assert Sweep.objects.get().unit.label == "Z9"
