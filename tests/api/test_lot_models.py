"""lots/{id}/summary and lots/{id}/spice?corner=typ|low|high from the lot's percentile band."""

import numpy as np
import pytest

from labdb.measurements.services.fits import store_fit
from labdb.physics import fit_junction, junction_capacitance

pytestmark = pytest.mark.django_db


@pytest.fixture
def api(client_for):
    return client_for("token_read")


def test_a_lot_without_a_summary_answers_409_with_a_reason(api, stored_sweep):
    lot = stored_sweep.unit.lot_id
    for url in (f"/api/v1/lots/{lot}/summary", f"/api/v1/lots/{lot}/spice"):
        response = api.get(url)
        assert response.status_code == 409
        assert "no summary yet" in response.json()["errors"][0]["message"]


def test_an_unknown_lot_is_404(api, db):
    assert api.get("/api/v1/lots/999/summary").status_code == 404
    assert api.get("/api/v1/lots/999/spice").status_code == 404


def test_the_summary_carries_the_statistics_and_the_band(api, lot_summary):
    body = api.get(f"/api/v1/lots/{lot_summary.lot_id}/summary").json()
    assert body["id"] == lot_summary.pk and body["n_units"] == 1
    assert body["band"]["p10"] == lot_summary.band["p10"]
    assert body["lot_fit"] is None


@pytest.mark.parametrize("corner, curve", [("low", "p10"), ("high", "p90"), ("typ", "p50")])
def test_each_corner_is_the_junction_fitted_to_its_percentile_curve(
    api, lot_summary, band_params, parse_card, corner, curve
):
    response = api.get(f"/api/v1/lots/{lot_summary.lot_id}/spice?corner={corner}")
    assert response.status_code == 200
    card = response.content.decode()
    name, got = parse_card(card)
    assert name == f"TST_V1_L1_{corner.upper()}"
    cjo, vj, m = band_params[curve]
    # The band curves are exact junction curves: the fit recovers their parameters.
    assert got["CJO"] == pytest.approx(cjo, rel=1e-4)
    assert got["VJ"] == pytest.approx(vj, rel=1e-3)
    assert got["M"] == pytest.approx(m, rel=1e-3)
    assert f"{curve[1:]}th-percentile" in card


def test_the_low_corner_gives_less_capacitance_than_the_high_corner(api, lot_summary, parse_card):
    cards = {
        c: parse_card(
            api.get(f"/api/v1/lots/{lot_summary.lot_id}/spice?corner={c}").content.decode()
        )[1]
        for c in ("low", "high")
    }
    bias = np.array([0.0, 5.0, 20.0])
    low = junction_capacitance(bias, cards["low"]["CJO"], cards["low"]["VJ"], cards["low"]["M"])
    high = junction_capacitance(bias, cards["high"]["CJO"], cards["high"]["VJ"], cards["high"]["M"])
    assert np.all(low < high)


def test_the_typical_model_is_the_lot_model_fit_when_there_is_one(api, lot_summary, parse_card):
    bias = np.linspace(0.0, 20.0, 21)
    result = fit_junction(bias, junction_capacitance(bias, 48e-12, 0.81, 0.56), model="junction")
    fit = store_fit(result, lot_summary=lot_summary, version=1, in_sha="t", origin="lot")
    response = api.get(f"/api/v1/lots/{lot_summary.lot_id}/spice")
    card = response.content.decode()
    _, got = parse_card(card)
    assert got["CJO"] == pytest.approx(fit.cjo, rel=5e-9)
    assert f"lot-model fit {fit.pk}" in card
    summary = api.get(f"/api/v1/lots/{lot_summary.lot_id}/summary").json()
    assert summary["lot_fit"]["id"] == fit.pk
    fit_card = api.get(f"/api/v1/fits/{fit.pk}/spice").content.decode()
    assert parse_card(fit_card)[0] == "TST_V1_L1_LOT_V1"


def test_an_unknown_corner_is_400_naming_corner(api, lot_summary):
    response = api.get(f"/api/v1/lots/{lot_summary.lot_id}/spice?corner=worst")
    assert response.status_code == 400
    assert response.json()["errors"][0]["field"] == "corner"


def test_a_condition_without_a_summary_is_409_listing_what_exists(api, lot_summary):
    response = api.get(f"/api/v1/lots/{lot_summary.lot_id}/spice?illumination=illuminated")
    assert response.status_code == 409
    assert "dark at 25 °C" in response.json()["errors"][0]["message"]


def test_a_summary_without_a_band_is_409(api, lot_summary):
    lot_summary.band = {}
    lot_summary.save()
    response = api.get(f"/api/v1/lots/{lot_summary.lot_id}/spice?corner=low")
    assert response.status_code == 409
    assert "band" in response.json()["errors"][0]["message"]
