"""Impedance pages: an impedance sweep (|Z|, phase, Q with the fitted equivalent), and the
unit page's bias-series section (C–V and Q–V of derived sweeps, the derive button)."""

from __future__ import annotations

import math

import numpy as np
from django import forms
from django.contrib import messages
from django.core.exceptions import PermissionDenied
from django.http import Http404
from django.shortcuts import redirect, render

from labdb.accounts.roles import MEMBER, has_role
from labdb.catalog.models import Unit
from labdb.measurements.errors import Rejected
from labdb.measurements.models import ImpedanceFit, Sweep
from labdb.measurements.services.bias_series import (
    derive_cv_from_bias_series,
    derived_sweeps,
    impedance_groups,
)
from labdb.measurements.services.impedance import sweep_impedance
from labdb.physics import capacitance_of
from labdb.physics.bias_series import MIN_BIASES
from labdb.physics.errors import PhysicsInputError
from labdb.physics.impedance import effective_capacitance, esr_at, quality_factor
from labdb.web import charts, impedance_charts


class FrequencyForm(forms.Form):
    """A test frequency in MHz (optional where a default exists)."""

    frequency_mhz = forms.FloatField(
        required=False, min_value=1e-6, label="Test frequency (MHz)",
        widget=forms.NumberInput(attrs={"step": "any", "placeholder": "default"}),
    )  # fmt: skip


def fit_rows(fit: ImpedanceFit) -> list[dict]:
    """Cs, Rs, Ls and SRF with standard errors, in bench units."""
    se = fit.stderr or {}

    def err(key, factor):
        return None if se.get(key) is None else se[key] * factor

    return [
        {"name": "Cs", "value": fit.cs_f * 1e12, "stderr": err("cs_f", 1e12), "unit": "pF"},
        {"name": "Rs (ESR)", "value": fit.rs_ohm, "stderr": err("rs_ohm", 1), "unit": "Ω"},
        {"name": "Ls", "value": fit.ls_h * 1e9, "stderr": err("ls_h", 1e9), "unit": "nH"},
        {
            "name": "SRF",
            "value": None if fit.srf_hz is None else fit.srf_hz / 1e6,
            "stderr": None,
            "unit": "MHz",
        },
    ]


def _figures_at(f, z, fit, at_mhz: float | None) -> dict | None:
    """ESR (readings), Q and Ceff (readings and model) at one frequency, or an error."""
    if at_mhz is None:
        return None
    at = at_mhz * 1e6
    try:
        esr = esr_at(f, z, at)
    except PhysicsInputError as exc:
        return {"error": str(exc)}
    xr = float(np.interp(math.log(at), np.log(f), z.imag))
    zr = complex(esr, xr)
    phys = fit.as_physics() if fit is not None else None
    return {
        "frequency_mhz": at_mhz,
        "esr": esr,
        "q": float(quality_factor([zr])[0]),
        "ceff": float(effective_capacitance([at], [zr])[0]),
        "q_model": None if phys is None else float(phys.q_at([at])[0]),
        "ceff_model": None if phys is None else float(phys.ceff_at([at])[0]),
    }


def impedance_sweep_detail(request, sweep: Sweep):
    """The page of a ``zf`` sweep; called by ``sweeps.sweep_detail`` for that kind."""
    versions = list(sweep.impedance_fits.order_by("-version"))
    for v in versions:
        v.ls_nh = v.ls_h * 1e9  # the versions table shows nH
    fit = versions[0] if versions else None
    wanted = request.GET.get("version")
    if wanted:
        fit = next((v for v in versions if str(v.version) == wanted), None)
        if fit is None:
            raise Http404(f"sweep {sweep.pk} has no fit version {wanted}")
    form = FrequencyForm(request.GET or None)
    at_mhz = form.cleaned_data.get("frequency_mhz") if form.is_valid() else None
    f, z = sweep_impedance(sweep)
    phys = fit.as_physics() if fit is not None else None
    unit = sweep.unit
    name = f"{unit.lot.part.part_number} lot {unit.lot.code} unit {unit.label} at {sweep.bias_min_v:g} V"
    points = [
        (fi, abs(zi), math.degrees(math.atan2(zi.imag, zi.real)), zi.real, zi.imag, qi)
        for fi, zi, qi in zip(f, z, quality_factor(z), strict=True)
    ]
    return render(
        request,
        "web/impedance_sweep_detail.html",
        {
            "sweep": sweep,
            "unit": unit,
            "part": unit.lot.part,
            "fit": fit,
            "versions": versions,
            "fit_rows": fit_rows(fit) if fit else [],
            "mag_chart": impedance_charts.magnitude_chart(f, z, phys, f"|Z| of {name}"),
            "phase_chart": impedance_charts.phase_chart(f, z, phys, f"Phase of Z, {name}"),
            "q_chart": impedance_charts.q_chart(f, z, phys, f"Q of {name}"),
            "form": form,
            "at": _figures_at(f, z, fit, at_mhz),
            "points": points,
            "derivatives": sweep.derivatives.filter(archived=False),
        },
    )


def unit_impedance_context(unit: Unit) -> dict:
    """What the unit page's bias-series section shows (empty dict without impedance data)."""
    groups = impedance_groups(unit)
    if not groups:
        return {}
    newest: dict[int, ImpedanceFit] = {}
    ids = [s.pk for sweeps in groups.values() for s in sweeps]
    for fit in ImpedanceFit.objects.filter(sweep_id__in=ids).order_by("sweep_id", "version"):
        newest[fit.sweep_id] = fit  # one query; the last version of each sweep wins
    rows = []
    for sweeps in groups.values():
        for s in sorted(sweeps, key=lambda s: s.bias_min_v):
            rows.append({"sweep": s, "fit": newest.get(s.pk)})
    series = []
    for i, d in enumerate(derived_sweeps(unit)):
        pts = d.points
        bias = np.asarray(pts["bias_v"], dtype=float)
        title = f"C–V at {d.test_frequency_hz / 1e6:.4g} MHz from the bias series ({d.illumination}, {d.temperature_c:g} °C)"
        if d.current_fit is not None:
            grid = charts.smooth_grid(float(bias.min()), float(bias.max()))
            cv = charts.cv_with_fit(
                bias,
                pts["capacitance_f"],
                grid,
                capacitance_of(d.current_fit.params, grid),
                title=title,
            )
        else:
            cv = charts.cv_with_fit(bias, pts["capacitance_f"], title=title)
        q = (pts.get("extras") or {}).get("q") or []
        qv = impedance_charts.q_bias_chart(bias, [math.nan if v is None else v for v in q],
                                           d.test_frequency_hz, f"Q–V at {d.test_frequency_hz / 1e6:.4g} MHz")  # fmt: skip
        series.append({"sweep": d, "cv_chart": cv, "qv_chart": qv, "id": f"series-{i}"})
    ready = any(len({s.bias_min_v for s in v}) >= MIN_BIASES for v in groups.values())
    return {
        "impedance_rows": rows,
        "bias_series": series,
        "can_derive": ready,
        "min_biases": MIN_BIASES,
        "derive_form": FrequencyForm(),
    }


def derive_from_unit_page(request, unit: Unit):
    """POST on the unit page: derive C–V (and Q–V) from the bias series; members only."""
    if not has_role(request.user, MEMBER):
        raise PermissionDenied("deriving a C–V sweep needs the 'member' role")
    form = FrequencyForm(request.POST)
    if not form.is_valid():
        messages.error(request, "the test frequency must be a positive number of MHz")
        return redirect(unit)
    mhz = form.cleaned_data.get("frequency_mhz")
    try:
        outcomes = derive_cv_from_bias_series(
            unit, None if mhz is None else mhz * 1e6, request.user, origin="upload"
        )
    except Rejected as exc:
        messages.error(request, f"no C–V derived: {exc}")
        return redirect(unit)
    for o in outcomes:
        if o.status == "rejected":
            messages.error(request, f"{o.source}: " + "; ".join(str(p) for p in o.problems))
        elif o.status == "duplicate":
            messages.info(request, f"{o.source}: already derived as sweep #{o.sweep.pk}")
        else:
            messages.success(request, f"{o.source}: C–V stored as sweep #{o.sweep.pk}, fit v1")
    return redirect(unit)
