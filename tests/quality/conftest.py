"""Quality fixtures: lots of units with known junction parameters, stored without fitting.

``make_lot`` writes units, sweeps (points from the junction model, optional reading noise)
and a current fit with the generating parameters, the way a perfect fitter would. Tests of
the quality service then know each unit's figures exactly; the real import path is covered
by the demo-scenario and refit tests.
"""

from __future__ import annotations

import hashlib
from datetime import date

import numpy as np
import pytest


@pytest.fixture
def part(db):
    from labdb.catalog.models import Part

    return Part.objects.create(
        part_number="QT-1",
        kind="varactor",
        rated_reverse_v=10.0,
        ref_bias_low_v=0.0,
        ref_bias_high_v=8.0,
    )


@pytest.fixture
def meter(db):
    from labdb.measurements.models import Fixture

    return Fixture.objects.create(name="meter Q", kind="meter", test_frequency_hz=1e6)


def store_unit_sweep(
    unit,
    fixture,
    cjo,
    vj,
    m,
    *,
    cp=0.0,
    bias=None,
    noise=0.0,
    seed=0,
    illumination="dark",
    temperature_c=25.0,
    rms_rel=None,
    capacitance=None,
):
    """One sweep of ``unit`` with points from the model and a fit holding the same parameters."""
    from labdb.measurements.models import Fit, Sweep
    from labdb.measurements.services import points_hash
    from labdb.physics import FITTER_VERSION, junction_capacitance

    v = np.linspace(0.0, 8.0, 33) if bias is None else np.asarray(bias, dtype=float)
    c = junction_capacitance(v, cjo, vj, m, cp) if capacitance is None else np.asarray(capacitance)
    if noise:
        c = c * (1.0 + noise * np.random.default_rng(seed).standard_normal(v.size))
    sha = points_hash(v, c)
    raw = hashlib.sha256(f"{unit.pk}-{sha}-{illumination}-{temperature_c}".encode()).hexdigest()
    sweep = Sweep.objects.create(
        unit=unit,
        fixture=fixture,
        kind="cv",
        raw_file=f"raw/{raw}.csv",
        raw_name="gen.csv",
        raw_sha256=raw,
        raw_size=1,
        points={"bias_v": v.tolist(), "capacitance_f": c.tolist()},
        points_sha256=sha,
        n_points=v.size,
        bias_min_v=float(v.min()),
        bias_max_v=float(v.max()),
        temperature_c=temperature_c,
        illumination=illumination,
    )
    params = {"cjo": cjo, "vj": vj, "m": m} | ({"cp": cp} if cp else {})
    fit = Fit.objects.create(
        sweep=sweep,
        version=1,
        model="junction+cp" if cp else "junction",
        params=params,
        stderr={k: 0.0 for k in params},
        correlation=[],
        cjo=cjo,
        vj=vj,
        m=m,
        cp=cp,
        rms_rel=noise if rms_rel is None else rms_rel,
        r2=1.0,
        aicc=None,
        n_points=v.size,
        bias_min_v=float(v.min()),
        bias_max_v=float(v.max()),
        converged=True,
        fitter_version=FITTER_VERSION,
        input_sha256=sha,
        origin="command",
    )
    Sweep.objects.filter(pk=sweep.pk).update(current_fit=fit)
    sweep.current_fit = fit
    return sweep


def lot_with_units(part, fixture, code, received, cjos, vj=0.8, m=0.5, **kw):
    """A lot whose unit i has CJO = cjos[i] [F] (VJ, M shared); returns the lot."""
    from labdb.catalog.models import Lot, Unit

    lot = Lot.objects.create(part=part, code=code, received_on=received)
    for i, cjo in enumerate(cjos):
        unit = Unit.objects.create(lot=lot, label=f"U{i + 1:02d}")
        store_unit_sweep(unit, fixture, float(cjo), vj, m, **kw)
    return lot


@pytest.fixture
def make_lot(part, meter):
    """make_lot(code, cjos, received=date(...), **sweep options) → Lot."""
    count = {"n": 0}

    def make(code, cjos, received=None, **kw):
        count["n"] += 1
        day = received or date(2026, 1, count["n"])
        return lot_with_units(part, meter, code, day, cjos, **kw)

    return make


@pytest.fixture
def clean_cjos():
    """CJO of n units spread 1 % about 50 pF, seeded (returns a function of n and seed)."""

    def draw(n=9, seed=1, centre=50e-12):
        return centre * (1.0 + 0.01 * np.random.default_rng(seed).standard_normal(n))

    return draw


@pytest.fixture
def add_sweep(meter):
    """add_sweep(unit, cjo, vj=0.8, m=0.5, **options) → Sweep with its current fit."""

    def add(unit, cjo, vj=0.8, m=0.5, **kw):
        return store_unit_sweep(unit, meter, cjo, vj, m, **kw)

    return add
