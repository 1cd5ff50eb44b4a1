"""Throttles: failed authentications per address, writes per user (rates from settings)."""

import pytest
from rest_framework.test import APIClient

from labdb.api.tokens import mint_token

pytestmark = pytest.mark.django_db


@pytest.fixture
def rates(settings):
    def set_rates(**rates):
        rf = dict(settings.REST_FRAMEWORK)
        rf["DEFAULT_THROTTLE_RATES"] = {**rf["DEFAULT_THROTTLE_RATES"], **rates}
        settings.REST_FRAMEWORK = rf  # DRF reloads its settings on this change

    return set_rates


def test_an_address_with_too_many_failed_logins_is_told_to_wait(rates, member):
    rates(failed_auth="3/min")
    bad = APIClient()
    bad.credentials(HTTP_AUTHORIZATION="Token wrong-key")
    assert [bad.get("/api/v1/parts/").status_code for _ in range(3)] == [401, 401, 401]
    refused = bad.get("/api/v1/parts/")
    assert refused.status_code == 429
    assert int(refused["Retry-After"]) >= 1
    assert "failed authentications" in refused.json()["errors"][0]["message"]
    # The block is per address, whatever the credentials: a good key waits too.
    _, key = mint_token(member)
    good = APIClient()
    good.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    assert good.get("/api/v1/parts/").status_code == 429


def test_successful_requests_do_not_count_as_failures(rates, member):
    rates(failed_auth="2/min")
    _, key = mint_token(member)
    good = APIClient()
    good.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    assert {good.get("/api/v1/parts/").status_code for _ in range(5)} == {200}


def test_writes_beyond_the_write_rate_get_429_and_reads_go_on(rates, client_for, bench):
    rates(write="2/min")
    client = client_for("token_write")
    codes = [
        client.post(
            "/api/v1/units/", {"lot": bench.lot.pk, "label": f"U{i}"}, format="json"
        ).status_code
        for i in range(3)
    ]
    assert codes == [201, 201, 429]
    assert client.get("/api/v1/units/").status_code == 200


def test_a_forged_forwarded_for_header_does_not_escape_the_block(rates, db):
    # API_NUM_PROXIES=0 (no proxy): the peer address counts, X-Forwarded-For is ignored.
    rates(failed_auth="2/min")
    bad = APIClient()
    bad.credentials(HTTP_AUTHORIZATION="Token wrong-key")
    for i in range(2):
        bad.get("/api/v1/parts/", HTTP_X_FORWARDED_FOR=f"10.0.0.{i}")
    assert bad.get("/api/v1/parts/", HTTP_X_FORWARDED_FOR="10.9.9.9").status_code == 429
