"""The audit page: curators read who did what, filtered by actor, object and action."""

from __future__ import annotations

from django import forms
from django.core.paginator import Paginator
from django.shortcuts import render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import CURATOR
from labdb.audit.models import Action, AuditEvent
from labdb.audit.signals import AUDITED

PAGE_SIZE = 100


class AuditFilterForm(forms.Form):
    actor = forms.CharField(required=False, max_length=150, label="User name")
    object_type = forms.ChoiceField(
        required=False,
        label="Record type",
        choices=[("", "any")] + [(label, label) for label in AUDITED],
    )
    object_id = forms.CharField(required=False, max_length=64, label="Record id")
    action = forms.ChoiceField(
        required=False, label="Action", choices=[("", "any")] + list(Action.choices)
    )

    def apply(self, events):
        d = self.cleaned_data
        if d.get("actor"):
            events = events.filter(actor_name__iexact=d["actor"].strip())
        if d.get("object_type"):
            events = events.filter(object_type=d["object_type"])
        if d.get("object_id"):
            events = events.filter(object_id=d["object_id"].strip())
        if d.get("action"):
            events = events.filter(action=d["action"])
        return events


@role_required(CURATOR)
def audit_list(request):
    form = AuditFilterForm(request.GET)
    events = AuditEvent.objects.all()
    status = 200
    if form.is_valid():
        events = form.apply(events)
    else:
        events = events.none()
        status = 400
    page = Paginator(events, PAGE_SIZE).get_page(request.GET.get("page"))
    params = request.GET.copy()
    params.pop("page", None)
    return render(
        request,
        "audit/event_list.html",
        {"form": form, "page": page, "query": params.urlencode()},
        status=status,
    )
