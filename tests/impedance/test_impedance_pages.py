"""Impedance pages: the sweep page's charts, the unit page's bias series, the derive button."""

import json
import re

import pytest

from labdb.catalog.models import Unit
from labdb.measurements.models import Sweep
from labdb.measurements.services import record_file

pytestmark = pytest.mark.django_db


def _charts(html: str) -> dict[str, dict]:
    """Figures embedded by json_script, by their element id."""
    found = re.findall(r'<script id="([^"]+)" type="application/json">(.*?)</script>', html, re.S)
    return {k: json.loads(v) for k, v in found}


@pytest.fixture
def zf_sweep(analyser, make_s1p):
    (out,) = record_file(make_s1p(noise=1e-3), "u1_2V.s1p")
    return out.sweep


@pytest.fixture
def series(analyser, make_s1p):
    for v, cs in ((0.0, 50e-12), (2.0, 30e-12), (5.0, 21e-12), (10.0, 16e-12)):
        record_file(make_s1p(cs=cs, bias=f"{v:g} V", n=61), f"u1_{v:g}V.s1p")
    return Unit.objects.get(label="U1")


def test_the_impedance_sweep_page_draws_titled_log_charts_with_the_fit_and_srf(
    viewer_client, zf_sweep
):
    response = viewer_client.get(f"/sweeps/{zf_sweep.pk}/")
    assert response.status_code == 200
    html = response.content.decode()
    assert "<script>" not in html  # no inline scripts: charts come from JSON data blocks
    charts = _charts(html)
    mag = charts["z-mag-chart-data"]
    assert mag["layout"]["title"]["text"].startswith("|Z| of TST-V1")
    assert mag["layout"]["xaxis"]["type"] == "log" and mag["layout"]["yaxis"]["type"] == "log"
    assert mag["layout"]["xaxis"]["title"]["text"] == "test frequency (MHz)"
    assert mag["layout"]["yaxis"]["title"]["text"] == "|Z| (Ω)"
    names = [t["name"] for t in mag["data"]]
    assert names[:2] == ["measured", "fitted series R–L–C"]
    assert names[2].startswith("self-resonance 58")  # 1/(2π√(1.5 nH·50 pF)) = 581 MHz
    phase = charts["z-phase-chart-data"]
    assert phase["layout"]["yaxis"]["title"]["text"] == "phase of Z (°)"
    assert "Q = |X|/R" in charts["z-q-chart-data"]["layout"]["yaxis"]["title"]["text"]
    assert "Cs" in html and "Rs (ESR)" in html and "SRF" in html


def test_figures_at_a_chosen_frequency_show_esr_q_and_ceff(viewer_client, zf_sweep):
    response = viewer_client.get(f"/sweeps/{zf_sweep.pk}/?frequency_mhz=10")
    html = response.content.decode()
    assert "At 10 MHz" in html and "ESR (Ω)" in html
    outside = viewer_client.get(f"/sweeps/{zf_sweep.pk}/?frequency_mhz=5000").content.decode()
    assert "outside the measured" in outside


def test_an_unknown_fit_version_is_404(viewer_client, zf_sweep):
    assert viewer_client.get(f"/sweeps/{zf_sweep.pk}/?version=9").status_code == 404


def test_the_unit_page_lists_impedance_sweeps_and_offers_members_the_derive_button(
    viewer_client, member_client, series
):
    as_viewer = viewer_client.get(f"/units/{series.pk}/").content.decode()
    assert "Impedance sweeps" in as_viewer and "Derive C–V" not in as_viewer
    as_member = member_client.get(f"/units/{series.pk}/").content.decode()
    assert "Derive C–V and Q–V" in as_member


def test_a_member_derives_and_the_unit_page_then_shows_c_v_and_q_v(member_client, series):
    response = member_client.post(f"/units/{series.pk}/", {"derive": "1", "frequency_mhz": "1"})
    assert response.status_code == 302
    derived = Sweep.objects.get(kind="cv", unit=series)
    assert derived.test_frequency_hz == 1e6 and derived.derived_from.count() == 4
    html = member_client.get(f"/units/{series.pk}/").content.decode()
    assert f"stored as sweep #{derived.pk}" in html
    charts = _charts(html)
    cv, qv = charts["series-0-cv-data"], charts["series-0-qv-data"]
    assert cv["layout"]["title"]["text"].startswith("C–V at 1 MHz")
    assert cv["layout"]["yaxis"]["title"]["text"] == "capacitance (pF)"
    assert qv["layout"]["xaxis"]["title"]["text"] == "reverse bias (V)"
    assert [t["name"] for t in qv["data"]] == ["Q at 1 MHz"]


def test_a_viewer_cannot_derive(viewer_client, series):
    response = viewer_client.post(f"/units/{series.pk}/", {"derive": "1"})
    assert response.status_code == 403
    assert not Sweep.objects.filter(kind="cv").exists()


def test_a_refused_derivation_says_why_and_stores_nothing(member_client, series):
    response = member_client.post(
        f"/units/{series.pk}/", {"derive": "1", "frequency_mhz": "900"}, follow=True
    )
    assert "self-resonance" in response.content.decode()
    assert not Sweep.objects.filter(kind="cv").exists()


def test_the_upload_page_stores_a_one_port_file(member_client, analyser, make_s1p):
    from django.core.files.uploadedfile import SimpleUploadedFile

    upload = SimpleUploadedFile("u1_2V.s1p", make_s1p(), content_type="application/octet-stream")
    response = member_client.post("/upload/", {"files": upload, "store": "1", "model": "auto"})
    assert response.status_code == 200
    sweep = Sweep.objects.get()
    assert sweep.kind == "zf" and f"sweep #{sweep.pk}" in response.content.decode()


def test_the_upload_preview_of_a_one_port_file_stores_nothing(member_client, analyser, make_s1p):
    from django.core.files.uploadedfile import SimpleUploadedFile

    upload = SimpleUploadedFile("u1_2V.s1p", make_s1p(), content_type="application/octet-stream")
    response = member_client.post("/upload/", {"files": upload, "preview": "1", "model": "auto"})
    assert response.status_code == 200
    assert "series equivalent: Cs 50 pF" in response.content.decode()
    assert not Sweep.objects.exists()


def test_the_upload_form_gives_the_bias_of_a_file_without_one(member_client, analyser, make_s1p):
    from django.core.files.uploadedfile import SimpleUploadedFile

    upload = SimpleUploadedFile("u1.s1p", make_s1p(bias=None))
    form = {"files": upload, "store": "1", "model": "auto", "bias_v": "3.5"}
    assert member_client.post("/upload/", form).status_code == 200
    assert Sweep.objects.get().bias_min_v == 3.5
