"""The upload page: preview stores nothing; store records; bad files are rejected whole."""

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from labdb.catalog.models import Part
from labdb.measurements.models import Sweep

pytestmark = pytest.mark.django_db


def _file(data, name="u1.csv"):
    return SimpleUploadedFile(name, data, content_type="text/csv")


def test_preview_shows_the_fit_and_stores_nothing(bench, make_cv, member_client):
    response = member_client.post(
        "/upload/", {"files": _file(make_cv()), "preview": "1", "model": "auto"}
    )
    assert response.status_code == 200
    assert b"Preview (nothing stored yet)" in response.content
    assert b"CJO" in response.content
    assert Sweep.objects.count() == 0


def test_store_after_preview_uses_the_staged_files(bench, make_cv, member_client):
    response = member_client.post(
        "/upload/", {"files": _file(make_cv()), "preview": "1", "model": "auto"}
    )
    token = response.context["staged"]
    response = member_client.post("/upload/", {"staged": token, "store": "1", "model": "auto"})
    assert response.status_code == 200
    assert Sweep.objects.count() == 1
    assert Sweep.objects.get().uploaded_by.username == "milo"


def test_store_reports_stored_duplicate_and_rejected(bench, make_cv, member_client):
    good = make_cv()
    member_client.post("/upload/", {"files": _file(good), "store": "1", "model": "auto"})
    bad = b"bias (V),C (pF)\n0,oops\n"
    response = member_client.post(
        "/upload/",
        {
            "files": [
                _file(good, "again.csv"),
                _file(make_cv(unit="U2"), "u2.csv"),
                _file(bad, "bad.csv"),
            ],
            "store": "1",
            "model": "auto",
        },
    )
    counts = response.context["counts"]
    assert counts == {"stored": 1, "duplicate": 1, "rejected": 1}
    assert Sweep.objects.count() == 2
    assert b"bad.csv" in response.content


def test_a_new_part_named_on_the_form_is_created_only_if_something_is_stored(
    bench, make_cv, member_client
):
    data = make_cv(part="NEW-7")
    bad = b"bias (V),C (pF)\n0,oops\n"
    member_client.post(
        "/upload/",
        {
            "files": _file(bad),
            "new_part_number": "NEW-7",
            "new_part_kind": "led",
            "store": "1",
            "model": "auto",
        },
    )
    assert not Part.objects.filter(part_number="NEW-7").exists()
    member_client.post(
        "/upload/",
        {
            "files": _file(data),
            "new_part_number": "NEW-7",
            "new_part_kind": "led",
            "new_part_rated_reverse_v": "5",
            "store": "1",
            "model": "auto",
        },
    )
    part = Part.objects.get(part_number="NEW-7")
    assert part.kind == "led" and part.rated_reverse_v == 5.0
    assert Sweep.objects.filter(unit__lot__part=part).count() == 1


def test_a_viewer_cannot_upload(bench, make_cv, viewer_client):
    response = viewer_client.post("/upload/", {"files": _file(make_cv()), "store": "1"})
    assert response.status_code == 403
    assert Sweep.objects.count() == 0


def test_the_sweep_page_shows_chart_data_versions_and_raw_link(bench, make_cv, member_client):
    member_client.post("/upload/", {"files": _file(make_cv()), "store": "1", "model": "auto"})
    sweep = Sweep.objects.get()
    page = member_client.get(f"/sweeps/{sweep.pk}/")
    assert page.status_code == 200
    assert b'id="cv-chart-data"' in page.content and b"fitted model" in page.content
    raw = member_client.get(f"/sweeps/{sweep.pk}/raw")
    assert b"".join(raw.streaming_content) == make_cv()
