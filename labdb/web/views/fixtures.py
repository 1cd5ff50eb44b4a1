"""Fixture pages: list, create, and an oscillator's calibration history with a new-calibration form."""

from __future__ import annotations

import math

from django.contrib import messages
from django.shortcuts import get_object_or_404, redirect, render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import MEMBER, VIEWER, has_role
from labdb.measurements.errors import Rejected
from labdb.measurements.models import Fixture, FixtureKind
from labdb.measurements.services import record_calibration
from labdb.web import charts
from labdb.web.forms import CalibrationForm, FixtureForm


@role_required(VIEWER)
def fixture_list(request):
    form = None
    if has_role(request.user, MEMBER):
        form = FixtureForm(request.POST or None)
        if request.method == "POST" and form.is_valid():
            fixture = form.save()
            messages.success(request, f"Fixture '{fixture.name}' added.")
            return redirect(fixture.get_absolute_url())
    fixtures = Fixture.objects.all()
    return render(request, "web/fixture_list.html", {"fixtures": fixtures, "form": form})


def calibration_chart(cal) -> dict:
    """1/(2πf)² against reference capacitance: a straight line of slope L (Thomson)."""
    x = [c * 1e12 for c in cal.ref_capacitance_f]
    y = [1e18 / (2 * math.pi * f) ** 2 for f in cal.freq_hz]
    line_x = [min(x), max(x)]
    line_y = [1e18 * cal.inductance_h * (cal.stray_f + c * 1e-12) for c in line_x]
    data = [
        {
            "type": "scatter",
            "mode": "markers",
            "name": "reference readings",
            "x": x,
            "y": y,
            "marker": {"color": charts.PALETTE[0], "size": 8},
        },
        {
            "type": "scatter",
            "mode": "lines",
            "name": "least-squares line",
            "x": line_x,
            "y": line_y,
            "line": {"color": charts.PALETTE[1]},
        },
    ]
    return charts.figure(
        data,
        charts.layout(
            f"Calibration {cal.measured_at:%Y-%m-%d}: 1/(2πf)² against reference",
            "reference capacitance (pF)",
            "1/(2πf)² (ns²)",
        ),
    )


@role_required(VIEWER)
def fixture_detail(request, pk):
    fixture = get_object_or_404(Fixture, pk=pk)
    form = None
    if fixture.kind == FixtureKind.OSCILLATOR and has_role(request.user, MEMBER):
        form = CalibrationForm(request.POST or None)
        if request.method == "POST" and form.is_valid():
            refs, freqs = form.cleaned_data["readings"]
            try:
                record_calibration(
                    fixture,
                    form.cleaned_data["measured_at"],
                    refs,
                    freqs,
                    user=request.user,
                    notes=form.cleaned_data["notes"],
                )
            except Rejected as exc:
                form.add_error(None, str(exc))
            else:
                messages.success(request, "Calibration recorded.")
                return redirect(fixture.get_absolute_url())
    calibrations = list(fixture.calibrations.order_by("-measured_at"))
    rows = []
    for cal in calibrations:
        cov = cal.covariance
        rows.append(
            {
                "cal": cal,
                "l_sigma": math.sqrt(max(cov[0][0], 0.0)) if cov else None,
                "c_sigma": math.sqrt(max(cov[1][1], 0.0)) if cov else None,
                "open_hz": 1 / (2 * math.pi * math.sqrt(cal.inductance_h * cal.stray_f))
                if cal.stray_f > 0
                else None,
                "readings": list(
                    zip(
                        cal.ref_capacitance_f,
                        cal.freq_hz,
                        cal.residuals or [None] * len(cal.freq_hz),
                        strict=False,
                    )
                ),
            }
        )
    chart = calibration_chart(calibrations[0]) if calibrations else None
    return render(
        request,
        "web/fixture_detail.html",
        {"fixture": fixture, "rows": rows, "form": form, "chart": chart},
    )
