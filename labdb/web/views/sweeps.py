"""Sweep page (points, fit overlay, residuals, versions), fit versions and the raw file."""

from __future__ import annotations

import numpy as np
from django.http import FileResponse, Http404
from django.shortcuts import get_object_or_404, redirect, render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import VIEWER
from labdb.measurements.models import Fit, Sweep, SweepKind
from labdb.physics import capacitance_of
from labdb.web import charts
from labdb.web.views import impedance


def fit_rows(fit: Fit) -> list[dict]:
    """Parameters with standard errors in bench units, for the fit tables."""
    scale = {
        "cjo": (1e12, "pF", "CJO"),
        "vj": (1, "V", "VJ"),
        "m": (1, "", "M"),
        "cp": (1e12, "pF", "CP"),
    }
    rows = []
    for key, value in fit.params.items():
        factor, unit, label = scale.get(key, (1, "", key))
        err = fit.stderr.get(key)
        rows.append(
            {
                "name": label,
                "value": value * factor,
                "stderr": None if err is None else err * factor,
                "unit": unit,
            }
        )
    return rows


def sweep_charts(sweep: Sweep, fit: Fit | None) -> tuple[dict, dict | None]:
    bias = np.asarray(sweep.points["bias_v"], dtype=float)
    cap = np.asarray(sweep.points["capacitance_f"], dtype=float)
    title = f"C–V of {sweep.unit.lot.part.part_number} lot {sweep.unit.lot.code} unit {sweep.unit.label}"
    if fit is None:
        return charts.cv_with_fit(bias, cap, title=title), None
    grid = charts.smooth_grid(float(bias.min()), float(bias.max()))
    main = charts.cv_with_fit(bias, cap, grid, capacitance_of(fit.params, grid), title=title)
    rel = capacitance_of(fit.params, bias) / cap - 1.0
    return main, charts.residuals(bias, rel, title=f"Residuals of fit v{fit.version} ({fit.model})")


@role_required(VIEWER)
def sweep_detail(request, pk):
    sweep = get_object_or_404(
        Sweep.objects.select_related("unit__lot__part", "fixture", "calibration", "current_fit"),
        pk=pk,
    )
    if sweep.kind == SweepKind.ZF:  # impedance against frequency: its own page
        return impedance.impedance_sweep_detail(request, sweep)
    versions = list(sweep.fits.order_by("-version"))
    shown = sweep.current_fit
    wanted = request.GET.get("version")
    if wanted:
        shown = next((f for f in versions if str(f.version) == wanted), None)
        if shown is None:
            raise Http404(f"sweep {pk} has no fit version {wanted}")
    compare = None
    other = request.GET.get("compare")
    if other and shown is not None:
        compare = next((f for f in versions if str(f.version) == other), None)
    main_chart, resid_chart = sweep_charts(sweep, shown)
    pts = sweep.points
    table = list(
        zip(
            pts["bias_v"],
            pts["capacitance_f"],
            pts.get("frequency_hz") or [None] * len(pts["bias_v"]),
            pts.get("capacitance_sigma_f") or [None] * len(pts["bias_v"]),
            strict=True,
        )
    )
    return render(
        request,
        "web/sweep_detail.html",
        {
            "sweep": sweep,
            "unit": sweep.unit,
            "part": sweep.unit.lot.part,
            "fit": shown,
            "fit_rows": fit_rows(shown) if shown else [],
            "compare": compare,
            "compare_rows": fit_rows(compare) if compare else [],
            "versions": versions,
            "main_chart": main_chart,
            "resid_chart": resid_chart,
            "points": table,
        },
    )


@role_required(VIEWER)
def fit_detail(request, pk):
    fit = get_object_or_404(Fit, pk=pk)
    if fit.sweep_id:
        return redirect(f"{fit.sweep.get_absolute_url()}?version={fit.version}")
    return redirect(fit.lot_summary.lot.get_absolute_url())


@role_required(VIEWER)
def sweep_raw(request, pk):
    sweep = get_object_or_404(Sweep, pk=pk)
    try:
        handle = sweep.raw_file.open("rb")
    except FileNotFoundError:
        raise Http404("the raw file is missing from storage; tell a curator") from None
    return FileResponse(handle, as_attachment=True, filename=sweep.raw_name)
