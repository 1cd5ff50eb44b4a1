"""The dashboard: what the lab holds and what came in last."""

from django.db.models import Count
from django.shortcuts import render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import VIEWER
from labdb.catalog.models import Lot, Part, Unit
from labdb.measurements.models import Sweep
from labdb.quality.models import Flag


@role_required(VIEWER)
def dashboard(request):
    parts = Part.objects.filter(archived=False).annotate(
        n_lots=Count("lots", distinct=True), n_units=Count("lots__units", distinct=True)
    )
    recent = Sweep.objects.select_related("unit__lot__part", "current_fit").order_by(
        "-uploaded_at", "-id"
    )[:12]
    counts = {
        "parts": Part.objects.count(),
        "lots": Lot.objects.count(),
        "units": Unit.objects.count(),
        "sweeps": Sweep.objects.count(),
        "open_flags": Flag.objects.filter(state="open", active=True).count(),
    }
    return render(
        request, "web/dashboard.html", {"parts": parts, "recent": recent, "counts": counts}
    )
