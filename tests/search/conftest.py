"""A stock of parts built from known junction parameters: lots, unit fits and lot summaries.

Lot summaries are written directly from the generating parameters (medians over the units,
the common measured range), so the tests do not depend on the quality service's internals.
"""

from __future__ import annotations

import datetime as dt
import hashlib

import numpy as np
import pytest


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


@pytest.fixture(autouse=True)
def _quick_passwords(settings):
    # The persona fixtures hash a password per user; the default hasher is slow by design.
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


@pytest.fixture
def stock(db):
    return Stock()


@pytest.fixture
def day():
    """Receipt dates by ordinal: day(1) is 2025-01-01, later numbers are later days."""
    return lambda n: dt.date(2025, 1, 1) + dt.timedelta(days=n - 1)
