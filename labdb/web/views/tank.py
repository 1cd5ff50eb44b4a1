"""Tank finder page: which parts tune L ∥ C across a band with the bias available."""

from __future__ import annotations

import math

import numpy as np
from django import forms
from django.shortcuts import render

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import VIEWER
from labdb.physics import tank_frequency
from labdb.search.errors import SearchInputError
from labdb.search.queries import TankQuery
from labdb.search.services import find_tanks
from labdb.search.tank_q import lot_q_at
from labdb.web import charts
from labdb.web.views.search import PartFilterForm, number_field

DASHES = ["solid", "dash", "dot", "dashdot", "longdash", "longdashdot"]
CHART_PARTS = 6  # more curves than this stop being readable


class TankForm(PartFilterForm):
    l_uh = number_field("Inductance L (µH)", required=True)
    c_fixed = number_field(
        "Fixed parallel capacitance (pF)",
        placeholder="0",
        help_text="Everything in parallel with the tank, strays included.",
    )
    cc = number_field(
        "Series coupling capacitor (pF)",
        help_text="Optional; leave empty when the junction sits straight across the tank.",
    )
    f_low = number_field("Band from (MHz)", required=True)
    f_high = number_field("Band to (MHz)", required=True)
    v_min = number_field("Bias available from (V)", placeholder="0", help_text="Reverse bias.")
    v_max = number_field("Bias available to (V)", required=True)
    max_parts = forms.IntegerField(
        required=False,
        label="Parts to shortlist",
        widget=forms.NumberInput(attrs={"placeholder": "6"}),
    )

    FIELD_OF = {
        **PartFilterForm.FIELD_OF,
        "inductance_h": "l_uh",
        "fixed_f": "c_fixed",
        "coupling_f": "cc",
        "f_low_hz": "f_low",
        "f_high_hz": "f_high",
        "bias_min_v": "v_min",
        "bias_max_v": "v_max",
        "max_parts": "max_parts",
    }

    def query(self) -> TankQuery:
        d = self.cleaned_data
        return TankQuery(
            **self.filter_values(),
            inductance_h=d["l_uh"] * 1e-6,
            fixed_f=(d.get("c_fixed") or 0.0) * 1e-12,
            coupling_f=None if d.get("cc") is None else d["cc"] * 1e-12,
            f_low_hz=d["f_low"] * 1e6,
            f_high_hz=d["f_high"] * 1e6,
            bias_min_v=d.get("v_min") or 0.0,
            bias_max_v=d["v_max"],
            max_parts=d.get("max_parts") or 6,
        )


def tank_chart(result) -> dict:
    """f against bias for each shortlisted lot's median unit, the target band shaded."""
    q = result.query
    v = np.linspace(q.bias_min_v, q.bias_max_v, 60)
    fl, fh = q.f_low_hz / 1e6, q.f_high_hz / 1e6
    data = [
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"target band {fl:.6g}–{fh:.6g} MHz",
            "x": [float(v[0]), float(v[-1]), float(v[-1]), float(v[0]), float(v[0])],
            "y": [fl, fl, fh, fh, fl],
            "fill": "toself",
            "fillcolor": "rgba(201,130,43,0.18)",
            "line": {"color": "rgba(201,130,43,0.9)", "width": 1},
            "hoverinfo": "skip",
        }
    ]
    for i, cand in enumerate(result.candidates[:CHART_PARTS]):
        colour = charts.PALETTE[i % len(charts.PALETTE)]
        for j, lot in enumerate(cand.lots):
            f = tank_frequency(v, lot.params, q.inductance_h, q.fixed_f, q.coupling_f) / 1e6
            # One legend entry per part; its lots share colour and dash, the worst is thick.
            legend = (
                f"{cand.part_number}: {len(cand.lots)} lot(s), thick = worst lot "
                f"{cand.lots[0].code}"
            )
            data.append(
                {
                    "type": "scatter",
                    "mode": "lines",
                    "name": legend
                    if j == 0
                    else f"{cand.part_number} lot {lot.code}"
                    + (" (extrapolated)" if lot.extrapolated else ""),
                    "legendgroup": cand.part_number,
                    "showlegend": j == 0,
                    "x": [round(float(x), 4) for x in v],
                    "y": [float(f"{y:.7g}") for y in f],
                    "line": {
                        "color": colour,
                        "width": 2 if j == 0 else 1,
                        "dash": DASHES[i % len(DASHES)],
                    },
                }
            )
    title = (
        f"Tank frequency against reverse bias: L = {q.inductance_h * 1e6:.4g} µH, "
        f"{q.fixed_f * 1e12:.4g} pF fixed"
        + (f", {q.coupling_f * 1e12:.4g} pF coupling" if q.coupling_f else "")
    )
    return charts.figure(data, charts.layout(title, "reverse bias (V)", "frequency (MHz)"))


@role_required(VIEWER)
def tank(request):
    form = TankForm(request.GET) if request.GET else TankForm()
    result = None
    chart = None
    if form.is_bound and form.is_valid():
        try:
            result = find_tanks(form.query())
        except SearchInputError as err:
            form.attach(err)
    lot_q = {}
    if result is not None and result.candidates:
        chart = tank_chart(result)
        centre = math.sqrt(result.query.f_low_hz * result.query.f_high_hz)
        lot_ids = [lot.lot_id for c in result.candidates for lot in c.lots]
        lot_q = lot_q_at(lot_ids, centre)
    return render(
        request,
        "web/tank.html",
        {"form": form, "result": result, "chart": chart, "lot_q": lot_q},
        status=400 if form.is_bound and form.errors else 200,
    )
