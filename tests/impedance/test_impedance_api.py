"""The impedance endpoints of /api/v1/: upload, points and fit versions, derive, Q at f."""

import math

import pytest
from rest_framework.test import APIClient

from labdb.catalog.models import Unit
from labdb.measurements.models import Sweep
from labdb.measurements.services import record_file

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def _fresh_throttles():
    from django.core.cache import cache

    cache.clear()
    yield
    cache.clear()


def _client(user=None, token_scope=None):
    client = APIClient()
    if token_scope:
        from labdb.api.tokens import mint_token

        _, key = mint_token(user, token_scope, name=token_scope)
        client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    elif user is not None:
        client.force_login(user)
    return client


@pytest.fixture
def series(analyser, make_s1p):
    for v, cs in ((0.0, 50e-12), (2.0, 30e-12), (5.0, 21e-12), (10.0, 16e-12)):
        (out,) = record_file(make_s1p(cs=cs, bias=f"{v:g} V", n=61), f"u1_{v:g}V.s1p")
        assert out.status == "stored"
    return Unit.objects.get(label="U1")


def test_a_script_uploads_a_one_port_file_with_its_bias(analyser, member, make_s1p):
    from django.core.files.uploadedfile import SimpleUploadedFile

    upload = SimpleUploadedFile("u1.s1p", make_s1p(bias=None))
    response = _client(member, "write").post(
        "/api/v1/sweeps/", {"file": upload, "bias_v": "4.5"}, format="multipart"
    )
    assert response.status_code == 201, response.json()
    body = response.json()
    assert body["kind"] == "zf" and body["points"] is None and body["current_fit"] is None
    sweep = Sweep.objects.get(pk=body["id"])
    assert sweep.bias_min_v == 4.5


def test_a_broken_one_port_file_gets_located_errors_and_nothing_is_stored(analyser, member):
    from django.core.files.uploadedfile import SimpleUploadedFile

    bad = b"! part: TST-V1\n! unit: U1\n! lot: L1\n! fixture: analyser A\n# MHz Y RI R 50\n1 0 0\n"
    response = _client(member).post(
        "/api/v1/sweeps/", {"file": SimpleUploadedFile("bad.s1p", bad)}, format="multipart"
    )
    assert response.status_code == 400
    (err,) = response.json()["errors"]
    assert err["file"] == "bad.s1p" and err["line"] == 5 and "admittance" in err["message"]
    assert not Sweep.objects.exists()


def test_points_and_fit_versions_of_an_impedance_sweep(series, viewer):
    sweep = Sweep.objects.filter(kind="zf").order_by("bias_min_v").first()
    client = _client(viewer)
    body = client.get(f"/api/v1/sweeps/{sweep.pk}/impedance").json()
    assert body["bias_v"] == 0.0 and len(body["frequency_hz"]) == 61
    assert len(body["z_real_ohm"]) == len(body["z_imag_ohm"]) == 61
    fit = body["current_fit"]
    assert fit["version"] == 1 and fit["cs_f"] == pytest.approx(50e-12, rel=1e-6)
    assert fit["srf_hz"] == pytest.approx(1 / (2 * math.pi * math.sqrt(1.5e-9 * 50e-12)), rel=1e-6)
    fits = client.get(f"/api/v1/sweeps/{sweep.pk}/impedance-fits/").json()
    assert [f["version"] for f in fits["results"]] == [1]
    detail = client.get(f"/api/v1/sweeps/{sweep.pk}/").json()
    assert detail["kind"] == "zf" and detail["points"] is None


def test_a_c_v_sweep_has_no_impedance_points(bench, make_cv, viewer):
    (out,) = record_file(make_cv(), "cv.csv")
    response = _client(viewer).get(f"/api/v1/sweeps/{out.sweep.pk}/impedance")
    assert response.status_code == 404
    assert "not an impedance sweep" in response.json()["errors"][0]["message"]


def test_a_member_derives_a_c_v_and_a_second_call_is_a_duplicate(series, member):
    client = _client(member, "write")
    first = client.post(
        f"/api/v1/units/{series.pk}/derive-cv", {"frequency_hz": 1e6}, format="json"
    )
    assert first.status_code == 201, first.json()
    body = first.json()
    assert body["kind"] == "cv" and body["conditions"]["test_frequency_hz"] == 1e6
    assert len(body["points"]["extras"]["q"]) == 4 and body["current_fit"]["version"] == 1
    again = client.post(
        f"/api/v1/units/{series.pk}/derive-cv", {"frequency_hz": 1e6}, format="json"
    )
    assert again.status_code == 200 and again.json()["duplicate"] is True


def test_deriving_needs_a_write_token_and_the_member_role(series, member, viewer):
    url = f"/api/v1/units/{series.pk}/derive-cv"
    assert _client().post(url, {}, format="json").status_code == 401
    assert _client(viewer).post(url, {}, format="json").status_code == 403
    assert _client(member, "read").post(url, {}, format="json").status_code == 403
    assert not Sweep.objects.filter(kind="cv").exists()


def test_a_refused_derivation_is_a_located_400(series, member):
    response = _client(member).post(
        f"/api/v1/units/{series.pk}/derive-cv", {"frequency_hz": 900e6}, format="json"
    )
    assert response.status_code == 400
    (err,) = response.json()["errors"]
    assert err["field"] == "frequency_hz" and "self-resonance" in err["message"]


def test_q_at_a_frequency_against_bias(series, viewer):
    client = _client(viewer)
    body = client.get(f"/api/v1/units/{series.pk}/q?frequency_hz=10000000").json()
    w = 2 * math.pi * 10e6
    want = [abs(w * 1.5e-9 - 1 / (w * c)) / 0.5 for c in (50e-12, 30e-12, 21e-12, 16e-12)]
    assert body["bias_v"] == [0.0, 2.0, 5.0, 10.0]
    assert body["q"] == pytest.approx(want, rel=1e-6)
    assert client.get(f"/api/v1/units/{series.pk}/q?frequency_hz=5e9").status_code == 409
    assert client.get(f"/api/v1/units/{series.pk}/q").status_code == 400
    assert client.get(f"/api/v1/units/{series.pk}/q?frequency_hz=-1").status_code == 400
