"""Shared fixtures: persona users (viewer, member, curator, outsider) and isolated media."""

from __future__ import annotations

import hashlib

import numpy as np
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


# --- a stock of parts built from known junction parameters (search, tank and API tests) ---
# Lot summaries are written directly from the generating parameters (medians over the
# units, the common measured range), so those tests do not depend on the quality
# service's internals.


def _junction(v, cjo, vj, m, cp):
    # Power law only: every stock window is reverse-biased (V ≥ 0).
    return cjo * (1.0 + v / vj) ** (-m) + cp


class Stock:
    """Builders for parts, lots (with units and fits) and their summaries."""

    def __init__(self):
        from labdb.measurements.models import Fixture

        self.meter = Fixture.objects.create(name="stock meter", kind="meter")
        self._n = 0

    def part(self, number, *, kind="varactor", window=(1.0, 10.0), rated=30.0, description=""):
        from labdb.catalog.models import Part

        low, high = window if window else (None, None)
        return Part.objects.create(
            part_number=number,
            kind=kind,
            description=description,
            rated_reverse_v=rated,
            ref_bias_low_v=low,
            ref_bias_high_v=high,
        )

    def lot(
        self,
        part,
        code,
        params,
        *,
        units=None,
        n_units=5,
        received=None,
        measured=(0.0, 20.0),
        illumination="dark",
        temperature_c=25.0,
        summary=True,
    ):
        """A lot whose units all have ``params`` (cjo, vj, m, cp), or one set per unit.

        ``measured`` is the bias range [V] every unit was swept over. Returns the Lot.
        """
        from labdb.catalog.models import Lot

        lot = Lot.objects.get_or_create(part=part, code=code, defaults={"received_on": received})[0]
        unit_params = list(units) if units is not None else [params] * n_units
        for i, p in enumerate(unit_params, 1):
            self.unit_fit(
                lot,
                f"U{i:02d}",
                p,
                measured=measured,
                illumination=illumination,
                temperature_c=temperature_c,
            )
        if summary:
            self.summary(lot, unit_params, part, measured, illumination, temperature_c)
        return lot

    def unit_fit(
        self, lot, label, params, *, measured=(0.0, 20.0), illumination="dark", temperature_c=25.0
    ):
        from labdb.catalog.models import Unit
        from labdb.measurements.models import Fit, Sweep

        cjo, vj, m, cp = params
        unit = Unit.objects.get_or_create(lot=lot, label=label)[0]
        self._n += 1
        sha = hashlib.sha256(f"stock-{self._n}".encode()).hexdigest()
        sweep = Sweep.objects.create(
            unit=unit,
            fixture=self.meter,
            kind="cv",
            raw_file=f"stock/{sha}.csv",
            raw_name="stock.csv",
            raw_sha256=sha,
            raw_size=1,
            points={"bias_v": list(measured)},
            points_sha256=sha,
            n_points=2,
            bias_min_v=measured[0],
            bias_max_v=measured[1],
            temperature_c=temperature_c,
            illumination=illumination,
        )
        fit = Fit.objects.create(
            sweep=sweep,
            version=1,
            model="junction+cp",
            params={"cjo": cjo, "vj": vj, "m": m, "cp": cp},
            stderr={},
            correlation=[],
            cjo=cjo,
            vj=vj,
            m=m,
            cp=cp,
            rms_rel=0.0,
            n_points=2,
            bias_min_v=measured[0],
            bias_max_v=measured[1],
            converged=True,
            fitter_version="stock",
            input_sha256=sha,
            origin="command",
        )
        sweep.current_fit = fit
        sweep.save(update_fields=["current_fit"])
        return unit

    def summary(self, lot, unit_params, part, measured, illumination="dark", temperature_c=25.0):
        from labdb.quality.models import LotSummary

        a = np.asarray(unit_params, dtype=float)
        med = np.median(a, axis=0)
        ids = dict(lot.units.values_list("label", "pk"))
        # Each unit's fit as the quality service keeps it on the summary (labels as lot() gives).
        unit_fits = [[ids[f"U{i:02d}"], f"U{i:02d}", *map(float, p)] for i, p in enumerate(a, 1)]
        lo, hi = part.ref_bias_low_v, part.ref_bias_high_v
        c_lo = c_hi = swing = None
        if lo is not None and hi is not None:
            c_lo = _junction(lo, *a.T)
            c_hi = _junction(hi, *a.T)
            swing = c_lo / c_hi
        from labdb.quality.services.newest import refresh_part_copies

        summary = LotSummary.objects.create(
            lot=lot,
            part=part,
            received_on=lot.received_on,
            illumination=illumination,
            temperature_c=temperature_c,
            n_units=len(a),
            n_sweeps=len(a),
            cjo_med=med[0],
            vj_med=med[1],
            m_med=med[2],
            cp_med=med[3],
            c_low_med_f=None if c_lo is None else float(np.median(c_lo)),
            c_high_med_f=None if c_hi is None else float(np.median(c_hi)),
            swing_med=None if swing is None else float(np.median(swing)),
            swing_min=None if swing is None else float(swing.min()),
            bias_min_v=measured[0],
            bias_max_v=measured[1],
            unit_fits=unit_fits,
        )
        refresh_part_copies([part.pk])  # the newest-lot mark, as a recomputation keeps it
        return summary


@pytest.fixture
def stock(db):
    """Builders for parts, lots with unit fits, and their summaries (:class:`Stock`)."""
    return Stock()
