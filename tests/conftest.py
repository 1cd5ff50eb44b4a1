"""Shared fixtures: persona users (viewer, member, curator, outsider) and isolated media."""

from __future__ import annotations

import pytest


@pytest.fixture(autouse=True)
def _isolated_media(settings, tmp_path):
    # Raw files written by a test land in its own folder, never in var/.
    settings.MEDIA_ROOT = tmp_path / "media"
    settings.STORAGES = {
        "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
        "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"},
    }


def _user(django_user_model, name: str, role: str | None):
    from django.contrib.auth.models import Group

    user = django_user_model.objects.create_user(username=name, password="pw-" + name)
    if role:
        user.groups.add(Group.objects.get(name=role))
    return user


@pytest.fixture
def viewer(db, django_user_model):
    return _user(django_user_model, "vera", "viewer")


@pytest.fixture
def member(db, django_user_model):
    return _user(django_user_model, "milo", "member")


@pytest.fixture
def curator(db, django_user_model):
    return _user(django_user_model, "cora", "curator")


@pytest.fixture
def outsider(db, django_user_model):
    """Logged in, but in no role group."""
    return _user(django_user_model, "otto", None)


def _client_for(user):
    from django.test import Client

    c = Client()
    c.force_login(user)
    return c


@pytest.fixture
def viewer_client(viewer):
    return _client_for(viewer)


@pytest.fixture
def member_client(member):
    return _client_for(member)


@pytest.fixture
def curator_client(curator):
    return _client_for(curator)


@pytest.fixture
def outsider_client(outsider):
    return _client_for(outsider)


@pytest.fixture
def bench(db):
    """A small catalogue: one varactor part with a lot, a meter and a calibrated oscillator.

    The oscillator's readings are computed with Thomson's formula f = 1/(2π√(L·C)) for
    L = 4.7 µH and C_stray = 20 pF (values chosen here, not measured).
    """
    import math
    from datetime import UTC, datetime

    from labdb.catalog.models import Lot, Part
    from labdb.measurements.models import Fixture
    from labdb.measurements.services import record_calibration

    part = Part.objects.create(part_number="TST-V1", kind="varactor", rated_reverse_v=30.0)
    lot = Lot.objects.create(part=part, code="L1")
    meter = Fixture.objects.create(name="meter A", kind="meter", test_frequency_hz=1e6)
    osc = Fixture.objects.create(name="osc A", kind="oscillator", nominal_inductance_h=4.7e-6)
    refs = [0.0, 10e-12, 22e-12, 47e-12, 100e-12]
    freqs = [1 / (2 * math.pi * math.sqrt(4.7e-6 * (20e-12 + c))) for c in refs]
    cal = record_calibration(osc, datetime(2026, 1, 1, tzinfo=UTC), refs, freqs)

    class Bench:
        pass

    b = Bench()
    b.part, b.lot, b.meter, b.osc, b.cal = part, lot, meter, osc, cal
    b.inductance_h, b.stray_f = 4.7e-6, 20e-12
    return b


def cv_csv(
    cjo=50e-12,
    vj=0.7,
    m=0.5,
    *,
    bias=None,
    unit="U1",
    lot="L1",
    part="TST-V1",
    fixture="meter A",
    noise=0.0,
    seed=1,
    extra_meta="",
) -> bytes:
    """A C–V file as a bench would write it, from known junction parameters."""
    import numpy as np

    from labdb.physics import junction_capacitance

    v = np.linspace(0, 20, 41) if bias is None else np.asarray(bias)
    c = junction_capacitance(v, cjo, vj, m)
    if noise:
        c = c * (1 + noise * np.random.default_rng(seed).standard_normal(v.size))
    head = (
        f"# part: {part}\n# lot: {lot}\n# unit: {unit}\n# fixture: {fixture}\n"
        f"# temperature: 25 °C\n# illumination: dark\n# measured at: 2026-02-01T10:00:00+00:00\n"
        f"{extra_meta}bias (V),C (pF)\n"
    )
    rows = "".join(f"{a:.4f},{b * 1e12:.6f}\n" for a, b in zip(v, c, strict=True))
    return (head + rows).encode()


@pytest.fixture
def make_cv():
    return cv_csv
