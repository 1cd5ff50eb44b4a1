"""manage.py mint_token prints a working key once and stores only its hash."""

import hashlib
from io import StringIO

import pytest
from django.core.management import CommandError, call_command
from rest_framework.test import APIClient

from labdb.api.models import ApiToken

pytestmark = pytest.mark.django_db


def test_it_prints_a_key_that_works_with_the_asked_scope(member, bench):
    out, err = StringIO(), StringIO()
    call_command(
        "mint_token", "milo", "--scope", "write", "--name", "bench 3", stdout=out, stderr=err
    )
    key = out.getvalue().strip()
    token = ApiToken.objects.get()
    assert (token.user, token.scope, token.name) == (member, "write", "bench 3")
    assert token.key_sha256 == hashlib.sha256(key.encode()).hexdigest()
    assert token.prefix in err.getvalue()
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    response = client.post("/api/v1/units/", {"lot": bench.lot.pk, "label": "U5"}, format="json")
    assert response.status_code == 201


def test_the_default_scope_is_read(member):
    call_command("mint_token", "milo", stdout=StringIO(), stderr=StringIO())
    assert ApiToken.objects.get().scope == "read"


def test_an_unknown_user_is_a_clear_error_and_mints_nothing(db):
    with pytest.raises(CommandError, match="no user named 'ghost'"):
        call_command("mint_token", "ghost", stdout=StringIO(), stderr=StringIO())
    assert ApiToken.objects.count() == 0


def test_an_unknown_scope_is_refused(member):
    with pytest.raises(CommandError):
        call_command("mint_token", "milo", "--scope", "admin", stdout=StringIO(), stderr=StringIO())
