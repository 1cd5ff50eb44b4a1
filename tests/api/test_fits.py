"""fits/{id}/ has exactly the contract's fields; sweeps/{id}/fits/ lists every version."""

import pytest

from labdb.measurements.services import fit_sweep

pytestmark = pytest.mark.django_db

#: The field list of the API contract (issue 7), top level and nested.
CONTRACT = {
    "id",
    "sweep",
    "version",
    "model",
    "params",
    "stderr",
    "correlation",
    "metrics",
    "warnings",
    "fitter_version",
    "created_at",
}
METRICS = {"rms_rel", "r2", "aicc", "n_points", "bias_min_v", "bias_max_v"}


@pytest.fixture
def api(client_for):
    return client_for("token_read")


def test_a_fit_has_exactly_the_contract_fields(api, stored_sweep):
    fit = stored_sweep.current_fit
    body = api.get(f"/api/v1/fits/{fit.pk}/").json()
    assert set(body) == CONTRACT
    assert set(body["metrics"]) == METRICS
    assert set(body["params"]) == {"cjo", "vj", "m"}  # model "junction": no cp
    assert body["sweep"] == stored_sweep.pk and body["version"] == 1
    assert body["params"] == {"cjo": fit.cjo, "vj": fit.vj, "m": fit.m}
    assert body["metrics"]["n_points"] == 41
    assert (body["metrics"]["bias_min_v"], body["metrics"]["bias_max_v"]) == (0.0, 20.0)
    assert len(body["correlation"]) == 3 and all(len(row) == 3 for row in body["correlation"])
    assert body["fitter_version"] == fit.fitter_version


def test_a_junction_plus_cp_fit_reports_cp(api, stored_sweep):
    fit = fit_sweep(stored_sweep, model="junction+cp", origin="api")
    body = api.get(f"/api/v1/fits/{fit.pk}/").json()
    assert body["model"] == "junction+cp"
    assert set(body["params"]) == set(body["stderr"]) == {"cjo", "vj", "m", "cp"}


def test_every_version_is_listed_newest_first_and_one_can_be_picked(api, stored_sweep):
    v2 = fit_sweep(stored_sweep, model="junction+cp", origin="api")
    v3 = fit_sweep(stored_sweep, model="junction", origin="api")
    listing = api.get(f"/api/v1/sweeps/{stored_sweep.pk}/fits/").json()
    assert [f["version"] for f in listing["results"]] == [3, 2, 1]
    assert all(set(f) == CONTRACT for f in listing["results"])
    picked = api.get(f"/api/v1/sweeps/{stored_sweep.pk}/fits/?version=2").json()["results"]
    assert [f["id"] for f in picked] == [v2.pk]
    current = api.get(f"/api/v1/sweeps/{stored_sweep.pk}/").json()["current_fit"]
    assert current["id"] == v3.pk


def test_a_missing_version_or_sweep_is_404(api, stored_sweep):
    assert api.get(f"/api/v1/sweeps/{stored_sweep.pk}/fits/?version=7").status_code == 404
    assert api.get("/api/v1/sweeps/999/fits/").status_code == 404
    assert api.get("/api/v1/fits/999/").status_code == 404
