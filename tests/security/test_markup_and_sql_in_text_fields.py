"""Markup and SQL typed into every text field are stored as typed and shown escaped.

Each text field a user can fill (part, lot, unit, fixture, calibration, sweep metadata,
flag note, token name) gets a hostile string; then every page that shows those records is
read as a curator: the raw string must appear nowhere, its escaped form where it is shown.
"""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.utils.html import escape

pytestmark = pytest.mark.django_db

SCRIPT = '<script>alert("labdb")</script>'
IMG = "<img src=x onerror=alert(1)>"
SQL = "x'); DROP TABLE catalog_part; --"
PAYLOADS = (SCRIPT, IMG, SQL)


@pytest.fixture
def hostile(bench, client_as, curator, make_cv):
    """A part, lot, unit, fixture, sweep, flag note and token name carrying the payloads."""
    from labdb.api.tokens import mint_token
    from labdb.catalog.models import Part
    from labdb.quality.models import Flag
    from labdb.quality.services import review_flag

    api = client_as("curator")
    part_number = "XSS-<u>1"
    made = api.post(
        "/api/v1/parts/",
        {"part_number": part_number, "kind": "led", "description": SCRIPT, "manufacturer": SQL,
         "rated_reverse_v": 5.0},
        content_type="application/json",
    )  # fmt: skip
    assert made.status_code == 201, made.content
    lot = api.post(
        "/api/v1/lots/",
        {"part": part_number, "code": IMG, "source": SCRIPT, "notes": SQL},
        content_type="application/json",
    )
    assert lot.status_code == 201, lot.content
    fixture = api.post(
        "/api/v1/fixtures/", {"name": "meter " + SCRIPT, "kind": "meter", "description": IMG},
        content_type="application/json",
    )  # fmt: skip
    assert fixture.status_code == 201, fixture.content
    data = make_cv(part=part_number, lot=IMG, unit="U<i>9", fixture="meter " + SCRIPT)
    stored = client_as("member").post(
        "/upload/",
        {"files": [SimpleUploadedFile("x.csv", data)], "operator": SCRIPT, "store": "1",
         "model": "auto"},
    )  # fmt: skip
    assert stored.status_code == 200, stored.content.decode()[:2000]
    part = Part.objects.get(part_number=part_number)
    sweep = part.lots.get().units.get().sweeps.get()
    flag = Flag.objects.create(part=part, lot=sweep.unit.lot, rule="lot_shift", summary=IMG)
    review_flag(flag, "acknowledged", curator, note=SCRIPT)
    mint_token(curator, "read", name=SCRIPT)
    return part, sweep


def pages(part, sweep) -> list[str]:
    lot, unit = sweep.unit.lot, sweep.unit
    return [
        "/", "/parts/", part.get_absolute_url(), lot.get_absolute_url(), unit.get_absolute_url(),
        sweep.get_absolute_url(), "/fixtures/", sweep.fixture.get_absolute_url(), "/flags/",
        "/flags/?state=acknowledged", "/upload/", "/search/?q=XSS", "/account/tokens/",
        "/audit/", f"/lots/compare/?part={part.part_number}", "/jobs/",
    ]  # fmt: skip


def test_it_stores_every_hostile_string_exactly_as_typed(hostile):
    from labdb.catalog.models import Part

    part, sweep = hostile
    part.refresh_from_db()
    assert (part.description, part.manufacturer) == (SCRIPT, SQL)
    assert sweep.unit.lot.code == IMG and sweep.operator == SCRIPT
    assert Part.objects.count() == 2  # the table the SQL names is still there, rows intact


def test_no_page_shows_a_hostile_string_unescaped(hostile, client_as):
    part, sweep = hostile
    client = client_as("curator")
    shown = {}
    for url in pages(part, sweep):
        response = client.get(url)
        assert response.status_code == 200, url
        html = response.content.decode()
        for payload in (*PAYLOADS, "<u>1", "<i>9"):
            if payload != SQL:  # SQL text is harmless in HTML; it must only not run
                assert payload not in html, f"{url} shows {payload!r} unescaped"
            if escape(payload) in html:
                shown.setdefault(payload, []).append(url)
    # The escaped forms do appear where the records are shown (the check can fail).
    assert part.get_absolute_url() in shown[SCRIPT]  # description
    assert "/flags/?state=acknowledged" in shown[SCRIPT]  # review note
    assert sweep.get_absolute_url() in shown[SCRIPT]  # operator
    assert "/account/tokens/" in shown[SCRIPT]  # token name
    assert sweep.unit.lot.get_absolute_url() in shown[IMG]  # lot code
    assert "/audit/" in shown[IMG]


def test_sql_in_search_text_is_only_text(hostile, client_as):
    response = client_as("viewer").get("/search/", {"q": SQL})
    assert response.status_code == 200
    assert escape(SQL) in response.content.decode()  # echoed back in the form, escaped
    api = client_as("viewer").get("/api/v1/parts/", {"manufacturer": SQL})
    assert [p["part_number"] for p in api.json()["results"]] == ["XSS-<u>1"]
