"""Search page: parts ranked by fitted swing over a bias window; the query string is its state."""

from __future__ import annotations

import numpy as np
from django import forms
from django.shortcuts import render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import VIEWER
from labdb.catalog.models import PartKind
from labdb.measurements.models import Illumination
from labdb.physics import capacitance_of
from labdb.search.errors import SearchInputError
from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

PF = 1e-12
LOT_LABELS = [
    ("every", "every lot"),
    ("latest", "latest lot only"),
    ("since", "lots received since a date"),
]


def number_field(label: str, required: bool = False, help_text: str = "", **attrs):
    """A decimal input field (any step); ``attrs`` go on the widget, e.g. a placeholder."""
    return forms.FloatField(
        required=required,
        label=label,
        help_text=help_text,
        widget=forms.NumberInput(attrs={"step": "any", **attrs}),
    )


class PartFilterForm(forms.Form):
    """Filters the search and the tank finder share (GET names kept short for bookmarks)."""

    q = forms.CharField(required=False, max_length=100, label="Part number or description contains")
    kind = forms.ChoiceField(
        choices=[("", "any kind")] + list(PartKind.choices), required=False, label="Kind"
    )
    light = forms.ChoiceField(choices=Illumination.choices, required=False, label="Illumination")
    t_min = number_field("Temperature from (°C)", placeholder="20")
    t_max = number_field("Temperature to (°C)", placeholder="30")
    lots = forms.ChoiceField(choices=LOT_LABELS, required=False, label="Lots that count")
    since = forms.DateField(
        required=False,
        label="Received on or after",
        widget=forms.DateInput(attrs={"type": "date"}),
        help_text="Used with ‘lots received since a date’.",
    )
    min_units = forms.IntegerField(
        required=False,
        label="Minimum units measured",
        widget=forms.NumberInput(attrs={"placeholder": "1"}),
    )
    no_flags = forms.BooleanField(required=False, label="Leave out parts with open flags")
    extrapolated = forms.BooleanField(
        required=False, label="Include lots measured over a narrower bias range (marked)"
    )

    #: Query attribute → form field, so refusals land on the control that caused them.
    FIELD_OF = {
        "text": "q",
        "kind": "kind",
        "illumination": "light",
        "temp_min_c": "t_min",
        "temp_max_c": "t_max",
        "lots": "lots",
        "since": "since",
        "min_units": "min_units",
        "exclude_flagged": "no_flags",
        "include_extrapolated": "extrapolated",
    }

    def filter_values(self) -> dict:
        d = self.cleaned_data
        out = {
            "text": d.get("q") or "",
            "kind": d.get("kind") or "",
            "illumination": d.get("light") or Illumination.DARK,
            "temp_min_c": _or(d.get("t_min"), 20.0),
            "temp_max_c": _or(d.get("t_max"), 30.0),
            "lots": d.get("lots") or "every",
            "since": d.get("since"),
            "min_units": _or(d.get("min_units"), 1),
            "exclude_flagged": bool(d.get("no_flags")),
            "include_extrapolated": bool(d.get("extrapolated")),
        }
        return out

    def attach(self, err: SearchInputError) -> None:
        """Put each refused query parameter's message on its form field."""
        for p in err.problems:
            name = self.FIELD_OF.get(p.field)
            self.add_error(name if name in self.fields else None, p.message)


class SearchForm(PartFilterForm):
    v1 = number_field(
        "Window start V1 (V)",
        help_text="Reverse bias. Leave V1 and V2 empty to judge each part over "
        "its own reference window.",
    )
    v2 = number_field("Window end V2 (V)")
    min_swing = number_field(
        "Minimum swing C(V1)/C(V2)", help_text="Every counted lot's median unit must reach it."
    )
    c_at = forms.ChoiceField(
        choices=[("v1", "at V1"), ("v2", "at V2")], required=False, label="Capacitance limits apply"
    )
    c_min = number_field("Minimum capacitance (pF)")
    c_max = number_field("Maximum capacitance (pF)")
    sort = forms.ChoiceField(
        choices=[
            ("swing", "swing, worst lot, largest first"),
            ("cap_high", "capacitance, largest first"),
            ("cap_low", "capacitance, smallest first"),
            ("recent", "most recent lot first"),
        ],
        required=False,
        label="Order by",
    )
    page = forms.IntegerField(required=False, widget=forms.HiddenInput)

    FIELD_OF = {
        **PartFilterForm.FIELD_OF,
        "v1_v": "v1",
        "v2_v": "v2",
        "min_swing": "min_swing",
        "c_at": "c_at",
        "c_min_f": "c_min",
        "c_max_f": "c_max",
        "sort": "sort",
        "page": "page",
        "per_page": None,
    }

    def query(self) -> SearchQuery:
        d = self.cleaned_data
        return SearchQuery(
            **self.filter_values(),
            v1_v=d.get("v1"),
            v2_v=d.get("v2"),
            min_swing=d.get("min_swing"),
            c_at=d.get("c_at") or "v1",
            c_min_f=_scaled(d.get("c_min"), PF),
            c_max_f=_scaled(d.get("c_max"), PF),
            sort=d.get("sort") or "swing",
            page=_or(d.get("page"), 1),
            per_page=25,
        )


def _or(value, default):
    return default if value is None else value


def _scaled(value, factor):
    return None if value is None else value * factor


def page_url(request, page: int) -> str:
    params = request.GET.copy()
    params["page"] = str(page)
    return "?" + params.urlencode()


def thumbnail(hit, width: int = 132, height: int = 44) -> dict:
    """A tiny C–V sketch of each counted lot's median unit over the hit's window (SVG data)."""
    v = np.linspace(hit.v1_v, hit.v2_v, 16)
    curves = [(lot, capacitance_of(lot.params, v)) for lot in hit.lots]
    c_all = np.concatenate([c for _, c in curves])
    lo, hi = float(c_all.min()), float(c_all.max())
    span = hi - lo or hi or 1.0
    left, top, w, h = 30, 4, width - 34, height - 16
    lines = []
    for lot, c in curves:
        xs = left + (v - v[0]) / (v[-1] - v[0]) * w
        ys = top + (hi - c) / span * h
        lines.append(
            {
                "points": " ".join(f"{x:.1f},{y:.1f}" for x, y in zip(xs, ys, strict=True)),
                "dashed": lot.extrapolated,
                "worst": lot.code == hit.worst_lot,
            }
        )
    return {
        "width": width,
        "height": height,
        "lines": lines,
        "x0": left,
        "x1": left + w,
        "y0": top,
        "y1": top + h,
        "c_hi_pf": hi / PF,
        "c_lo_pf": lo / PF,
        "label": (
            f"C–V of {len(curves)} lot median(s) of {hit.part_number} from {hit.v1_v:g} V "
            f"to {hit.v2_v:g} V: {hi / PF:.3g} pF down to {lo / PF:.3g} pF"
        ),
    }


@role_required(VIEWER)
def search(request):
    # Always bound: every field is optional, so an empty query string is the default search.
    form = SearchForm(request.GET)
    result = None
    if form.is_valid():
        try:
            result = search_parts(form.query())
        except SearchInputError as err:
            form.attach(err)
    rows = []
    pages = None
    if result is not None:
        rows = [{"hit": h, "thumb": thumbnail(h) if h.lots else None} for h in result.hits]
        if result.n_pages > 1:
            pages = {
                "prev": page_url(request, result.page - 1) if result.page > 1 else None,
                "next": page_url(request, result.page + 1)
                if result.page < result.n_pages
                else None,
            }
    return render(
        request,
        "web/search.html",
        {
            "form": form,
            "result": result,
            "rows": rows,
            "pages": pages,
        },
        # A refused query is the client's error: say so in the status as well as the page.
        status=400 if form.is_bound and form.errors else 200,
    )
