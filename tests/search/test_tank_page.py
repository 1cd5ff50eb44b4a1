"""The tank finder page: labelled inputs in bench units, a chart, refusals and cautions."""

import json
import re

import pytest

pytestmark = pytest.mark.django_db

GOOD = (100e-12, 0.7, 0.5, 0.0)
TANK = "l_uh=10&c_fixed=20&f_low=5.5&f_high=7&v_min=0.5&v_max=10"


def test_an_empty_form_asks_for_the_tank_and_runs_nothing(viewer_client):
    r = viewer_client.get("/tank/")
    assert r.status_code == 200 and r.context["result"] is None
    html = r.content.decode()
    assert "Inductance L (µH)" in html and "Bench caution" in html


def test_every_form_control_has_a_label(viewer_client):
    html = viewer_client.get("/tank/").content.decode()
    controls = re.findall(r'<(?:input|select)[^>]*\bid="([^"]+)"[^>]*>', html)
    labelled = set(re.findall(r'<label for="([^"]+)"', html))
    assert controls and all(c in labelled for c in controls)


def test_a_covering_part_is_listed_with_a_chart_of_f_against_bias(viewer_client, stock):
    stock.lot(stock.part("TP-1", rated=30.0), "A", GOOD, n_units=2)
    r = viewer_client.get(f"/tank/?{TANK}")
    assert r.status_code == 200
    result = r.context["result"]
    assert result.query.inductance_h == pytest.approx(10e-6, rel=1e-12)  # µH → H
    assert result.query.f_low_hz == pytest.approx(5.5e6, rel=1e-12)  # MHz → Hz
    assert [c.part_number for c in result.candidates] == ["TP-1"]
    html = r.content.decode()
    data = json.loads(re.search(r'id="tank-chart-data"[^>]*>(.*?)</script>', html, re.S)[1])
    layout = data["layout"]
    assert layout["title"]["text"].startswith("Tank frequency against reverse bias")
    assert layout["xaxis"]["title"]["text"] == "reverse bias (V)"
    assert layout["yaxis"]["title"]["text"] == "frequency (MHz)"
    band = data["data"][0]
    assert band["fill"] == "toself" and min(band["y"]) == 5.5 and max(band["y"]) == 7.0
    assert "Centring" in html and "2 of 2 unit fits cover" in html


def test_a_bias_range_beyond_the_rating_is_warned_of(viewer_client, stock):
    stock.lot(stock.part("TP-LED", kind="led", rated=5.0), "A", GOOD, n_units=1)
    html = viewer_client.get(f"/tank/?{TANK}").content.decode()
    assert "beyond the rated reverse voltage of TP-LED" in html
    assert "beyond this part&#x27;s rated 5 V reverse" in html


def test_a_refusal_is_explained_on_the_page(viewer_client, stock):
    stock.lot(stock.part("TP-2"), "A", GOOD, n_units=1)
    html = viewer_client.get("/tank/?l_uh=10&f_low=3&f_high=12&v_min=0.5&v_max=10").content.decode()
    assert "Refused:" in html and "not reachable by any fixed capacitance" in html


def test_bad_values_stay_on_the_form(viewer_client):
    r = viewer_client.get("/tank/?l_uh=-1&f_low=7&f_high=5&v_max=5")
    assert r.status_code == 400 and r.context["result"] is None
    errors = r.context["form"].errors
    assert "l_uh" in errors and "f_high" in errors
    r = viewer_client.get("/tank/?l_uh=10&f_low=5&f_high=6")
    assert "v_max" in r.context["form"].errors  # required


def test_the_page_has_no_inline_script(viewer_client, stock):
    stock.lot(stock.part("TP-3"), "A", GOOD, n_units=1)
    html = viewer_client.get(f"/tank/?{TANK}").content.decode()
    assert not re.search(r"<script(?![^>]*\bsrc=)(?![^>]*application/json)", html)
