"""Hostile uploads through the page and the API: too big, zip bombs, names that climb out.

Each is refused with a clear 4xx naming the problem, and nothing is written: no row, no
raw file (counted before and after).
"""

from __future__ import annotations

import io
import zipfile

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

pytestmark = pytest.mark.django_db


def zip_of(members: dict[str, bytes]) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, data in members.items():
            zf.writestr(name, data)
    return buf.getvalue()


def upload(name: str, data: bytes) -> SimpleUploadedFile:
    return SimpleUploadedFile(name, data, content_type="application/octet-stream")


@pytest.fixture
def small_limit(settings):
    settings.UPLOAD_MAX_BYTES = 1_000_000
    return settings.UPLOAD_MAX_BYTES


def test_the_api_answers_413_to_an_oversized_upload_and_stores_nothing(
    bench, make_cv, client_as, rows, media_files, small_limit
):
    big = make_cv() + b"# padding\n" * 110_000  # ~1.1 MB: over the 1 MB limit set here
    before, files = rows(), media_files()
    response = client_as("token_write").post("/api/v1/sweeps/", {"file": upload("big.csv", big)})
    assert response.status_code == 413
    (error,) = response.json()["errors"]
    assert "at most 1000000" in error["message"]
    assert rows() == before and media_files() == files


def test_the_upload_page_says_which_file_is_too_big_and_stores_nothing(
    bench, make_cv, client_as, rows, media_files, small_limit
):
    big = make_cv() + b"# padding\n" * 110_000
    before, files = rows(), media_files()
    response = client_as("member").post(
        "/upload/", {"files": [upload("big.csv", big)], "store": "1", "model": "auto"}
    )
    assert response.status_code == 413
    assert "over the 1 MB limit: big.csv" in response.content.decode()
    assert rows() == before and media_files() == files


def test_a_zip_bomb_is_refused_by_the_api_and_the_page(
    bench, make_cv, client_as, rows, media_files
):
    # 8 MiB of zeros deflate to ~8 kB: a ratio near 1000, far over ARCHIVE_MAX_RATIO (200).
    bomb = zip_of({"u1.csv": make_cv(), "zeros.csv": bytes(8 * 1024 * 1024)})
    assert len(bomb) < 64 * 1024
    before, files = rows(), media_files()
    api = client_as("token_write").post("/api/v1/sweeps/", {"file": upload("bomb.zip", bomb)})
    assert api.status_code == 400
    messages = " ".join(e["message"] for e in api.json()["errors"])
    assert "zeros.csv" in messages and "zip bomb" in messages
    page = client_as("member").post(
        "/upload/", {"files": [upload("bomb.zip", bomb)], "store": "1", "model": "auto"}
    )
    assert page.status_code == 400
    assert "zip bomb" in page.content.decode()
    assert rows() == before and media_files() == files


def test_an_archive_with_too_many_members_is_refused_whole(
    bench, make_cv, client_as, rows, settings
):
    settings.ARCHIVE_MAX_MEMBERS = 3
    many = zip_of({f"u{i}.csv": make_cv(unit=f"U{i}") for i in range(5)})
    before = rows()
    response = client_as("token_write").post("/api/v1/sweeps/", {"file": upload("many.zip", many)})
    assert response.status_code == 400
    assert "5 files in the archive; at most 3" in response.json()["errors"][0]["message"]
    assert rows() == before


@pytest.mark.parametrize(
    "member_name", ["../../../evil.csv", "/etc/evil.csv", "C:\\evil.csv", "ok/../../evil.csv"]
)
def test_a_member_name_that_climbs_out_refuses_the_archive(
    bench, make_cv, client_as, rows, media_files, member_name
):
    archive = zip_of({"u1.csv": make_cv(), member_name: make_cv(unit="U2")})
    before, files = rows(), media_files()
    response = client_as("token_write").post("/api/v1/sweeps/", {"file": upload("up.zip", archive)})
    assert response.status_code == 400
    assert "points outside the archive" in response.json()["errors"][0]["message"]
    assert rows() == before and media_files() == files


@pytest.mark.parametrize(
    "name", ["../../../../tmp/evil.csv", "..\\..\\evil.csv", "/etc/cron.d/x.csv"]
)
def test_an_uploaded_file_name_cannot_place_the_raw_file_outside_the_store(
    bench, make_cv, client_as, settings, name, tmp_path
):
    from pathlib import Path

    from labdb.measurements.models import Sweep

    response = client_as("token_write").post("/api/v1/sweeps/", {"file": upload(name, make_cv())})
    assert response.status_code == 201, response.content
    sweep = Sweep.objects.get(pk=response.json()["id"])
    stored = Path(settings.MEDIA_ROOT, sweep.raw_file.name).resolve()
    assert stored.is_relative_to(Path(settings.MEDIA_ROOT, "raw").resolve())
    assert ".." not in sweep.raw_file.name and "/" not in sweep.raw_name
    assert stored.read_bytes() == make_cv()  # kept byte for byte, under a safe name
