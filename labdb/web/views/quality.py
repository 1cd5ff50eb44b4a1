"""Quality pages: flags (filter, review), lot comparison, a part's quality settings."""

from __future__ import annotations

from django.contrib import messages
from django.core.paginator import Paginator
from django.http import HttpResponseRedirect
from django.shortcuts import get_object_or_404, redirect, render
from django.urls import reverse
from django.utils.http import url_has_allowed_host_and_scheme
from django.views.decorators.http import require_POST

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import CURATOR, VIEWER
from labdb.catalog.models import Part
from labdb.quality.errors import ReviewRefused, SettingsRefused
from labdb.quality.models import Flag, FlagState
from labdb.quality.services import RULES, compare_lots, review_flag, update_part_settings
from labdb.web import quality_charts as qc
from labdb.web.quality_forms import FlagFilterForm, PartSettingsForm

ACTIONS = {
    "acknowledge": FlagState.ACKNOWLEDGED,
    "dismiss": FlagState.DISMISSED,
    "reopen": FlagState.OPEN,
}


@role_required(VIEWER)
def flag_list(request):
    form = FlagFilterForm(request.GET or None)
    flags = Flag.objects.select_related("part", "lot", "unit", "reviewed_by").order_by(
        "-updated_at", "-pk"
    )
    if form.is_valid():
        flags = form.apply(flags)
    else:
        flags = flags.filter(state=FlagState.OPEN, active=True)
    page = Paginator(flags, 100).get_page(request.GET.get("page"))
    return render(
        request,
        "web/flag_list.html",
        {"form": form, "page": page, "rules": RULES, "next": request.get_full_path()},
    )


@require_POST
@role_required(CURATOR)
def flag_review(request, pk):
    flag = get_object_or_404(Flag, pk=pk)
    action = request.POST.get("action", "")
    target = request.POST.get("next", "")
    if not url_has_allowed_host_and_scheme(target, {request.get_host()}, request.is_secure()):
        target = reverse("flag-list")
    if action not in ACTIONS:
        messages.error(
            request, f"flag {pk}: unknown action {action!r}; use acknowledge, dismiss or reopen"
        )
        return HttpResponseRedirect(target)
    try:
        review_flag(flag, ACTIONS[action], request.user, request.POST.get("note", ""))
    except ReviewRefused as exc:
        messages.error(request, f"Flag {pk} ({flag.summary[:60]}): {exc}")
    else:
        messages.success(request, f"Flag {pk} {ACTIONS[action].label}.")
    return HttpResponseRedirect(target)


@role_required(VIEWER)
def lot_compare(request):
    parts = Part.objects.filter(lots__summaries__isnull=False).distinct().order_by("part_number")
    part = None
    number = request.GET.get("part")
    if number:
        part = get_object_or_404(Part, part_number=number)
    ctx = {"parts": parts, "part": part, "result": None}
    if part is not None:
        lots = list(
            part.lots.filter(summaries__isnull=False).distinct().order_by("received_on", "code")
        )
        picked = [int(v) for v in request.GET.getlist("lots") if v.isdigit()]
        ctx.update(lots=lots, picked=picked)
        if len(picked) >= 2:
            result = compare_lots(part, picked, request.GET.get("condition"))
            ctx["result"] = result
            if len(result["summaries"]) >= 2:
                title = f"{part.part_number}: lots compared, {result['condition'].label}"
                ctx["chart"] = qc.compare_bands(result["summaries"], title)
        elif picked:
            ctx["hint"] = "Pick at least two lots."
    return render(request, "web/lot_compare.html", ctx)


@role_required(CURATOR)
def part_settings(request, part_number):
    part = get_object_or_404(Part, part_number=part_number)
    if request.method == "POST":
        form = PartSettingsForm(request.POST, part=part)
        if form.is_valid():
            try:
                report = update_part_settings(part, form.settings())
            except SettingsRefused as exc:
                form.add_error(form.field_for(exc.field), str(exc.args[0]))
            else:
                messages.success(
                    request,
                    f"Settings saved; {report.summarised} lot summaries recomputed, "
                    f"{report.flags.get('created', 0)} new flags.",
                )
                return redirect(part.get_absolute_url())
    else:
        form = PartSettingsForm(part=part)
    return render(request, "web/part_settings.html", {"part": part, "form": form})
