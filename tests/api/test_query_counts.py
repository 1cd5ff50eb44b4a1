"""List endpoints run a fixed number of queries, however many rows they return."""

import pytest

from labdb.catalog.models import Lot, Unit
from labdb.measurements.services import fit_sweep, record_file

pytestmark = pytest.mark.django_db

# A session request costs 3 queries before the view runs: the session row, the user, and
# the user's role groups. Page-number lists add a COUNT; cursor lists do not.
AUTH = 3


@pytest.fixture
def api(client_for):
    return client_for("viewer")


@pytest.fixture
def many(bench, make_cv):
    for i in range(4):
        lot = Lot.objects.create(part=bench.part, code=f"M{i}")
        Unit.objects.create(lot=lot, label="U1")
        (out,) = record_file(make_cv(unit=f"U{i}"), f"u{i}.csv", recompute=False)
        fit_sweep(out.sweep, model="junction+cp", origin="api")
    return bench


@pytest.mark.parametrize(
    "url, extra",
    [
        ("/api/v1/parts/", 2),  # count + rows
        ("/api/v1/lots/", 2),  # count + rows joined with the part
        ("/api/v1/units/", 2),  # count + rows joined with lot and part
        ("/api/v1/fixtures/", 2),
        ("/api/v1/calibrations/", 2),
        ("/api/v1/sweeps/", 1),  # rows joined with unit, lot, part, fixture and current fit
        ("/api/v1/sweeps/?part=TST-V1&illumination=dark", 1),
    ],
)
def test_list_endpoints_run_a_fixed_number_of_queries(
    api, many, django_assert_num_queries, url, extra
):
    with django_assert_num_queries(AUTH + extra):
        assert api.get(url).status_code == 200


def test_a_sweeps_fit_versions_take_two_queries_after_auth(api, many, django_assert_num_queries):
    from labdb.measurements.models import Sweep

    sweep = Sweep.objects.first()
    with django_assert_num_queries(AUTH + 2):  # the sweep exists? + the versions
        body = api.get(f"/api/v1/sweeps/{sweep.pk}/fits/").json()
    assert len(body["results"]) == 2


def test_token_requests_cost_the_same_once_the_last_use_is_recorded(
    client_for, many, django_assert_num_queries
):
    api = client_for("token_read")
    api.get("/api/v1/parts/")  # first use writes last_used_at (at most once a minute)
    # token joined with its user + role groups, then count + rows
    with django_assert_num_queries(2 + 2):
        assert api.get("/api/v1/parts/").status_code == 200
