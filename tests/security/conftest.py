"""Security and robustness tests: a small lab with one of everything, and callers of every kind."""

from __future__ import annotations

import math

import numpy as np
import pytest

#: Who calls: nobody, a logged-in user with no role, each role by session, and a member's
#: API tokens of each scope (the brief's persona list plus the role-less outsider).
PERSONAS = ("anonymous", "outsider", "viewer", "member", "curator", "token_read", "token_write")


@pytest.fixture(autouse=True)
def _fast_hashing_fresh_throttles(settings):
    # Full-strength hashing costs ~0.3 s a persona and throttle counters live in the cache:
    # these tests check access and input handling, so hash fast and start every test at zero.
    from django.core.cache import cache

    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]
    cache.clear()
    yield
    cache.clear()


@pytest.fixture
def relaxed_throttles(settings):
    """Lift the API throttles: a matrix sends hundreds of refused requests from one address."""
    rf = dict(settings.REST_FRAMEWORK)
    rf["DEFAULT_THROTTLE_RATES"] = {"write": "100000/min", "failed_auth": "100000/min"}
    settings.REST_FRAMEWORK = rf


@pytest.fixture
def role_groups(db):
    """The role groups, recreated if a transactional test elsewhere flushed them."""
    from django.contrib.auth.models import Group

    from labdb.accounts.roles import ROLES

    for name in ROLES:
        Group.objects.get_or_create(name=name)


@pytest.fixture
def token_keys(member):
    """Keys of a member's read and write tokens."""
    from labdb.api.tokens import mint_token

    return {scope: mint_token(member, scope, name=f"{scope} key")[1] for scope in ("read", "write")}


@pytest.fixture
def client_as(request, token_keys):
    """``client_as(persona)``: a Django test client acting as one of :data:`PERSONAS`.

    Token personas send ``Authorization: Token <key>`` on every request and hold no session.
    """
    from django.test import Client

    def make(persona: str, **kwargs) -> Client:
        if persona.startswith("token_"):
            key = token_keys[persona.removeprefix("token_")]
            return Client(HTTP_AUTHORIZATION=f"Token {key}", **kwargs)
        client = Client(**kwargs)
        if persona != "anonymous":
            client.force_login(request.getfixturevalue(persona))
        return client

    return make


def s1p(rs=0.5, ls=1.5e-9, cs=50e-12, *, bias_v=2.0, unit="Z1", lot="L1", part="TST-V1"):
    """A Touchstone one-port file of a series R–L–C (S11 = (Z − 50)/(Z + 50), closed form)."""
    f = np.geomspace(1e5, 1e9, 61)
    w = 2 * math.pi * f
    z = rs + 1j * (w * ls - 1 / (w * cs))
    s = (z - 50) / (z + 50)
    head = (
        f"! part: {part}\n! lot: {lot}\n! unit: {unit}\n! fixture: analyser A\n"
        f"! temperature: 25 °C\n! bias: {bias_v} V\n# MHz S RI R 50\n"
    )
    rows = "".join(
        f"{a / 1e6:.12g} {b.real:.15g} {b.imag:.15g}\n" for a, b in zip(f, s, strict=True)
    )
    return (head + rows).encode()


@pytest.fixture
def lab(bench, make_cv, member, curator):
    """One of everything a URL can name: part, lot, unit, C–V and impedance sweeps, fits,
    calibration, a flag, a job and a token of the member (for the revoke page)."""
    from labdb.api.tokens import mint_token
    from labdb.jobs.models import Job, JobKind
    from labdb.measurements.models import Fixture
    from labdb.measurements.services import record_file
    from labdb.quality.models import Flag

    Fixture.objects.create(name="analyser A", kind="meter")
    (cv,) = record_file(make_cv(cjo=47e-12, vj=0.8, m=0.55), "u1.csv", user=member)
    assert cv.status == "stored", cv.problems
    (zf,) = record_file(s1p(), "z1.s1p", user=member)
    assert zf.status == "stored", zf.problems
    flag = Flag.objects.create(
        part=bench.part, lot=bench.lot, unit=cv.sweep.unit, rule="unit_outlier",
        figure="c_ref_low", condition="dark 25", summary="unit U1 stands out (planted)",
    )  # fmt: skip
    job = Job.objects.create(
        kind=JobKind.values[0], owner=member, idempotency_key="matrix-job", params={},
        params_sha256="0" * 64,
    )  # fmt: skip
    token, _ = mint_token(member, "read", name="to revoke")

    class Lab:
        pass

    lab = Lab()
    lab.part, lab.lot, lab.unit = bench.part, bench.lot, cv.sweep.unit
    lab.sweep, lab.fit, lab.zf = cv.sweep, cv.sweep.current_fit, zf.sweep
    lab.fixture, lab.calibration = bench.meter, bench.cal
    lab.flag, lab.job, lab.token = flag, job, token
    return lab


def count_rows() -> dict[str, int]:
    """Rows of every labdb table (and users): what 'nothing written' is checked against."""
    from django.apps import apps
    from django.contrib.auth import get_user_model

    counts = {"auth.user": get_user_model().objects.count()}
    for cfg in apps.get_app_configs():
        if cfg.name.startswith("labdb."):
            for model in cfg.get_models():
                counts[model._meta.label_lower] = model._base_manager.count()
    return counts


@pytest.fixture
def rows():
    """``rows()`` → {table: count} now; compare before and after a refused request."""
    return count_rows


@pytest.fixture
def media_files(settings):
    """``media_files()`` → every file path under MEDIA_ROOT, relative to it."""
    from pathlib import Path

    def listing() -> set[str]:
        root = Path(settings.MEDIA_ROOT)
        if not root.exists():
            return set()
        return {str(p.relative_to(root)) for p in root.rglob("*") if p.is_file()}

    return listing
