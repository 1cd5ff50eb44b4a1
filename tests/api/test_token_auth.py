"""Token authentication: hashed storage, revocation, scope, last use, malformed headers."""

import hashlib

import pytest
from django.db import connection
from rest_framework.test import APIClient

from labdb.api.models import ApiToken
from labdb.api.tokens import mint_token, revoke_token

pytestmark = pytest.mark.django_db


def _client(key: str) -> APIClient:
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    return client


def test_the_database_never_holds_the_key_only_its_sha256(member):
    token, key = mint_token(member, "write", name="bench 3")
    assert token.key_sha256 == hashlib.sha256(key.encode()).hexdigest()
    assert token.prefix == key[:8]
    # Look at every column of the stored row as the database returns it.
    with connection.cursor() as cur:
        cur.execute("SELECT * FROM api_apitoken WHERE id = %s", [token.pk])
        row = cur.fetchone()
    assert not any(isinstance(v, str) and key in v for v in row)
    assert len(key) >= 40  # 32 random bytes, url-safe base64


def test_two_tokens_never_share_a_key(member):
    keys = {mint_token(member)[1] for _ in range(5)}
    assert len(keys) == 5


def test_a_valid_token_authenticates_and_records_its_last_use(member):
    token, key = mint_token(member)
    assert token.last_used_at is None
    response = _client(key).get("/api/v1/parts/")
    assert response.status_code == 200
    token.refresh_from_db()
    assert token.last_used_at is not None


def test_a_revoked_token_is_refused_with_401(member):
    token, key = mint_token(member, "write")
    assert _client(key).get("/api/v1/parts/").status_code == 200
    assert revoke_token(token) is True
    response = _client(key).get("/api/v1/parts/")
    assert response.status_code == 401
    assert response["WWW-Authenticate"] == "Token"
    assert response.json() == {"errors": [{"message": "unknown or revoked token"}]}
    assert revoke_token(token) is False  # revoking twice changes nothing


def test_an_unknown_key_is_refused_with_401(db):
    response = _client("not-a-key").get("/api/v1/parts/")
    assert response.status_code == 401
    assert ApiToken.objects.count() == 0


@pytest.mark.parametrize("header", ["Token", "Token a b", "Token \u00e9t\u00e9"])
def test_a_malformed_authorization_header_is_a_located_401(db, header):
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=header)
    response = client.get("/api/v1/parts/")
    assert response.status_code == 401
    assert response.json()["errors"][0]["message"]


def test_the_token_of_a_deactivated_user_stops_working(member):
    _, key = mint_token(member)
    member.is_active = False
    member.save()
    assert _client(key).get("/api/v1/parts/").status_code == 401


def test_a_read_token_cannot_write_even_for_a_curator(curator, bench):
    _, key = mint_token(curator, "read")
    response = _client(key).post("/api/v1/lots/", {"part": "TST-V1", "code": "L2"}, format="json")
    assert response.status_code == 403
    assert "read" in response.json()["errors"][0]["message"]


def test_a_token_acts_with_its_owners_role(viewer, bench):
    _, key = mint_token(viewer, "write")
    response = _client(key).post("/api/v1/lots/", {"part": "TST-V1", "code": "L2"}, format="json")
    assert response.status_code == 403
    assert "member" in response.json()["errors"][0]["message"]


def test_an_anonymous_request_gets_401_json_not_a_login_redirect(db):
    response = APIClient().get("/api/v1/sweeps/")
    assert response.status_code == 401
    assert response["Content-Type"].startswith("application/json")
    assert response["WWW-Authenticate"] == "Token"


def test_a_session_post_without_a_csrf_token_is_refused(member, bench):
    client = APIClient(enforce_csrf_checks=True)
    client.force_login(member)
    response = client.post("/api/v1/lots/", {"part": "TST-V1", "code": "L2"}, format="json")
    assert response.status_code == 403
    assert "CSRF" in response.json()["errors"][0]["message"]
