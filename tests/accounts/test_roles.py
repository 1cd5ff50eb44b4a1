"""Roles nest: curator ⊃ member ⊃ viewer; no role means no access."""

import pytest

from labdb.accounts.roles import CURATOR, MEMBER, VIEWER, has_role, role_of

pytestmark = pytest.mark.django_db


def test_the_migration_created_the_three_role_groups():
    from django.contrib.auth.models import Group

    assert set(Group.objects.values_list("name", flat=True)) >= {VIEWER, MEMBER, CURATOR}


def test_a_curator_holds_every_role(curator):
    assert [has_role(curator, r) for r in (VIEWER, MEMBER, CURATOR)] == [True, True, True]


def test_a_member_is_not_a_curator(member):
    assert role_of(member) == MEMBER
    assert has_role(member, VIEWER) and not has_role(member, CURATOR)


def test_a_user_in_no_group_has_no_role(outsider):
    assert role_of(outsider) is None
    assert not has_role(outsider, VIEWER)
