"""Part, lot and unit pages."""

from django.db.models import Count
from django.shortcuts import get_object_or_404, render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import VIEWER
from labdb.catalog.models import Lot, Part, Unit
from labdb.measurements.models import Sweep
from labdb.web.views import impedance


@role_required(VIEWER)
def part_list(request):
    parts = Part.objects.annotate(
        n_lots=Count("lots", distinct=True), n_units=Count("lots__units", distinct=True)
    )
    return render(request, "web/part_list.html", {"parts": parts})


@role_required(VIEWER)
def part_detail(request, part_number):
    part = get_object_or_404(Part, part_number=part_number)
    lots = part.lots.annotate(n_units=Count("units", distinct=True)).order_by("received_on", "code")
    return render(request, "web/part_detail.html", {"part": part, "lots": lots})


@role_required(VIEWER)
def lot_detail(request, pk):
    lot = get_object_or_404(Lot.objects.select_related("part"), pk=pk)
    units = lot.units.annotate(n_sweeps=Count("sweeps"))
    return render(request, "web/lot_detail.html", {"lot": lot, "part": lot.part, "units": units})


@role_required(VIEWER)
def unit_detail(request, pk):
    unit = get_object_or_404(Unit.objects.select_related("lot__part"), pk=pk)
    if request.method == "POST" and "derive" in request.POST:
        return impedance.derive_from_unit_page(request, unit)  # C–V from a bias series
    sweeps = Sweep.objects.filter(unit=unit).select_related("fixture", "current_fit")
    context = {"unit": unit, "sweeps": sweeps, **impedance.unit_impedance_context(unit)}
    return render(request, "web/unit_detail.html", context)
