"""The tokens page: mint (key shown once), list by prefix, revoke only your own."""

import hashlib
import re

import pytest

from labdb.api.models import ApiToken
from labdb.api.tokens import mint_token

pytestmark = pytest.mark.django_db


def _shown_key(html: str) -> str:
    match = re.search(r'id="new-key">([^<]+)<', html)
    assert match, "the new key is not on the page"
    return match.group(1)


def test_minting_shows_the_key_once_and_stores_its_hash(member_client, member):
    response = member_client.post("/account/tokens/", {"name": "bench 3", "scope": "write"})
    assert response.status_code == 200
    key = _shown_key(response.content.decode())
    token = ApiToken.objects.get(user=member)
    assert token.key_sha256 == hashlib.sha256(key.encode()).hexdigest()
    assert token.scope == "write" and token.name == "bench 3"
    again = member_client.get("/account/tokens/").content.decode()
    assert key not in again and f"{token.prefix}…" in again


def test_a_viewer_may_mint_a_read_token_but_not_a_write_token(viewer_client, viewer):
    refused = viewer_client.post("/account/tokens/", {"name": "", "scope": "write"})
    assert refused.status_code == 200
    assert "member role" in refused.content.decode()
    assert not ApiToken.objects.exists()
    viewer_client.post("/account/tokens/", {"name": "", "scope": "read"})
    assert ApiToken.objects.get(user=viewer).scope == "read"


def test_revoking_marks_the_token_and_the_key_stops_working(member_client, member):
    token, key = mint_token(member)
    response = member_client.post(f"/account/tokens/{token.pk}/revoke")
    assert response.status_code == 302
    token.refresh_from_db()
    assert token.revoked_at is not None
    from rest_framework.test import APIClient

    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    assert client.get("/api/v1/parts/").status_code == 401


def test_nobody_revokes_someone_elses_token(member_client, curator):
    token, _ = mint_token(curator)
    assert member_client.post(f"/account/tokens/{token.pk}/revoke").status_code == 404
    token.refresh_from_db()
    assert token.revoked_at is None


def test_the_page_lists_only_your_own_tokens(member_client, member, curator):
    mine, _ = mint_token(member, name="mine")
    theirs, _ = mint_token(curator, name="theirs")
    html = member_client.get("/account/tokens/").content.decode()
    assert mine.prefix in html and theirs.prefix not in html


def test_revoking_needs_a_post(member_client, member):
    token, _ = mint_token(member)
    assert member_client.get(f"/account/tokens/{token.pk}/revoke").status_code == 405


def test_the_page_needs_a_login_and_is_linked_from_the_navigation(client, viewer_client):
    assert client.get("/account/tokens/").status_code == 302
    assert 'href="/account/tokens/"' in viewer_client.get("/").content.decode()
