"""The search page: a GET form whose query string is the page's state, results, warnings."""

import re

import pytest

pytestmark = pytest.mark.django_db

P = (50e-12, 0.7, 0.5, 0.0)


@pytest.fixture
def two_parts(stock, day):
    stock.lot(stock.part("PG-1", description="tuning varactor"), "A", P, received=day(1))
    stock.lot(stock.part("PG-2"), "A", (50e-12, 0.7, 0.3, 0.0), measured=(0.0, 4.0))


def test_a_viewer_sees_ranked_parts_from_a_bookmarkable_query(viewer_client, two_parts):
    r = viewer_client.get("/search/?v1=1&v2=4&min_swing=1.5&sort=swing")
    assert r.status_code == 200
    page = r.context["result"]
    # By hand: ((0.7 + 4)/(0.7 + 1))^0.5 = 1.663 passes 1.5; the M = 0.3 part gives 1.357.
    assert [h.part_number for h in page.hits] == ["PG-1"]
    html = r.content.decode()
    assert 'value="1.5"' in html  # the form shows the query it answered
    assert "<svg" in html and "C–V of 1 lot median(s) of PG-1" in html


def test_every_form_control_has_a_label(viewer_client, two_parts):
    html = viewer_client.get("/search/").content.decode()
    controls = re.findall(r'<(?:input|select)[^>]*\bid="([^"]+)"[^>]*>', html)
    hidden = set(re.findall(r'<input type="hidden"[^>]*\bid="([^"]+)"', html))
    labelled = set(re.findall(r'<label for="([^"]+)"', html))
    assert controls and all(c in labelled for c in controls if c not in hidden)


def test_the_page_has_no_inline_script(viewer_client, two_parts):
    html = viewer_client.get("/search/").content.decode()
    assert not re.search(r"<script(?![^>]*\bsrc=)(?![^>]*application/json)", html)


def test_a_bad_value_is_shown_beside_its_field_with_a_400(viewer_client, two_parts):
    r = viewer_client.get("/search/?v1=5&v2=1")
    assert r.status_code == 400 and r.context["result"] is None
    assert "must be above its lower end" in r.context["form"].errors["v2"][0]
    r = viewer_client.get("/search/?v1=abc")
    assert r.status_code == 400 and "v1" in r.context["form"].errors
    r = viewer_client.get("/search/?lots=since")
    assert "first receipt date" in r.context["form"].errors["since"][0]


def test_extrapolation_is_announced_on_the_page(viewer_client, two_parts):
    html = viewer_client.get("/search/?v1=1&v2=9").content.decode()
    assert "were left out" in html and "1–9 V" in html
    marked = viewer_client.get("/search/?v1=1&v2=9&extrapolated=on").content.decode()
    assert "extrapolated</span>" in marked


def test_pages_link_to_each_other_keeping_the_query(viewer_client, stock):
    for i in range(27):
        stock.lot(stock.part(f"PP-{i:02d}"), "A", P, n_units=1)
    r = viewer_client.get("/search/?v1=1&v2=9&kind=varactor")
    assert r.context["result"].n_pages == 2
    html = r.content.decode()
    assert 'href="?v1=1&amp;v2=9&amp;kind=varactor&amp;page=2"' in html
    second = viewer_client.get("/search/?v1=1&v2=9&kind=varactor&page=2")
    assert len(second.context["result"].hits) == 2


def test_anonymous_visitors_are_sent_to_log_in_and_outsiders_refused(client, outsider_client):
    assert client.get("/search/").status_code == 302
    assert outsider_client.get("/search/").status_code == 403
