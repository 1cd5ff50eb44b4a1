"""Search fixtures; the ``stock`` of parts with known junction parameters is in tests/conftest.py."""

from __future__ import annotations

import datetime as dt

import pytest


@pytest.fixture(autouse=True)
def _quick_passwords(settings):
    # The persona fixtures hash a password per user; the default hasher is slow by design.
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


@pytest.fixture
def day():
    """Receipt dates by ordinal: day(1) is 2025-01-01, later numbers are later days."""
    return lambda n: dt.date(2025, 1, 1) + dt.timedelta(days=n - 1)
