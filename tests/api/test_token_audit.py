"""Minting and revoking a token are written to the audit trail, never the key itself."""

import pytest

from labdb.api.tokens import mint_token, revoke_token
from labdb.audit.models import AuditEvent

pytestmark = pytest.mark.django_db


def test_minting_and_revoking_are_audited_without_the_key(member):
    token, key = mint_token(member, "write", "bench PC")
    revoke_token(token)
    revoke_token(token)  # twice changes nothing, and writes nothing more
    events = list(AuditEvent.objects.filter(summary__contains=token.prefix).order_by("pk"))
    assert [e.action for e in events] == ["created", "archived"]
    assert all(e.actor_id == member.pk for e in events)
    assert all(key not in str(e.changes) and key not in e.summary for e in events)
