"""Plotly figures of the quality pages, in the house style of ``charts.py``.

Every figure is titled, has axis titles with units and a legend, and stays readable in
greyscale: series differ by lightness, line dash and marker symbol, not by hue alone.
"""

from __future__ import annotations

import numpy as np

from labdb.web.charts import PALETTE, SYMBOLS, figure, layout

INK = PALETTE[0]
AMBER = PALETTE[1]
FLAG = PALETTE[3]
GREY = "#9a9a9a"
BAND_FILL = "rgba(35, 57, 93, 0.16)"
DASHES = ["solid", "dash", "dot", "dashdot", "longdash", "longdashdot"]

#: Per figure: axis label, scale from SI to the shown unit.
FIGURE_AXES = {
    "c_low": ("C at {low:g} V (pF)", 1e12),
    "c_high": ("C at {high:g} V (pF)", 1e12),
    "swing": ("swing C({low:g} V)/C({high:g} V)", 1.0),
}


def _num(values, scale=1.0) -> list:
    """Plain floats for JSON; missing values become None (a gap in the line)."""
    out = []
    for v in values:
        out.append(None if v is None or not np.isfinite(v) else float(v) * scale)
    return out


def axis_label(name: str, window) -> tuple[str, float]:
    label, scale = FIGURE_AXES[name]
    return label.format(low=window[0], high=window[1]), scale


def _layout(title: str, x_title: str, y_title: str, **extra) -> dict:
    """The house layout with the legend clear of the x-axis title."""
    lay = layout(title, x_title, y_title, **extra)
    # Anchored to the bottom of the whole figure, so it never meets the axis title.
    lay["legend"] = {
        "orientation": "h",
        "yref": "container",
        "y": 0.01,
        "yanchor": "bottom",
        "x": 0,
    }
    lay["margin"] = dict(lay["margin"], b=130, t=60)
    return lay


#: Vertical extent of the three stacked panels of the lot-history chart (top to bottom).
_PANELS = ([0.70, 1.0], [0.36, 0.64], [0.0, 0.30])


def lot_history(rows: list[dict], window, title: str) -> dict:
    """Lot medians of each judged figure in received order, one stacked panel per figure.

    Each lot is drawn with the control limits it was judged against (those of the lots
    before it), as short horizontal marks joined by steps; flagged lots are ringed.
    """
    x = [str(r["lot"].received_on or r["lot"].created_at.date()) for r in rows]
    codes = [r["lot"].code for r in rows]
    data, lay = [], _layout(title, "", "", height=780)
    for k, name in enumerate(FIGURE_AXES):
        axis = "y" if k == 0 else f"y{k + 1}"
        y_title, scale = axis_label(name, window)
        lay["yaxis" if k == 0 else f"yaxis{k + 1}"] = {
            "title": {"text": y_title},
            "domain": _PANELS[k],
            "gridcolor": "#e6e2da",
            "zeroline": False,
        }
        first = k == 0
        med = [r["summary"].digest["stats"][name]["median"] for r in rows]
        charts = [r["chart"].get(name) for r in rows]
        data.append(
            {
                "type": "scatter",
                "mode": "lines+markers",
                "name": "lot median",
                "x": x,
                "y": _num(med, scale),
                "yaxis": axis,
                "legendgroup": "median",
                "showlegend": first,
                "text": codes,
                "hovertemplate": "lot %{text}<br>%{y:.4g}<extra></extra>",
                "line": {"color": INK, "width": 1.5},
                "marker": {"color": INK, "symbol": "circle", "size": 8},
            }
        )
        for key, label, colour, dash in (
            ("center", "centre line from earlier lots", GREY, "dash"),
            ("ucl", "control limits from earlier lots", AMBER, "dot"),
            ("lcl", "control limits from earlier lots", AMBER, "dot"),
        ):
            data.append(
                {
                    "type": "scatter",
                    "mode": "lines+markers",
                    "name": label,
                    "yaxis": axis,
                    "legendgroup": key if key == "center" else "limits",
                    "showlegend": first and key != "lcl",
                    "x": x,
                    "y": _num([c[key] if c else None for c in charts], scale),
                    "line": {"color": colour, "width": 1.5, "dash": dash, "shape": "hvh"},
                    "marker": {
                        "color": colour,
                        "symbol": "line-ew-open",
                        "size": 18,
                        "line": {"width": 2},
                    },
                    "hoverinfo": "skip",
                }
            )
        flagged = [i for i, r in enumerate(rows) if name in r["flagged"]]
        data.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": "flagged lot",
                "yaxis": axis,
                "legendgroup": "flagged",
                "showlegend": first,
                "x": [x[i] for i in flagged],
                "y": [_num([med[i]], scale)[0] for i in flagged],
                "text": [codes[i] for i in flagged],
                "hovertemplate": "flagged: lot %{text}<extra></extra>",
                "marker": {
                    "color": FLAG,
                    "symbol": "diamond-open",
                    "size": 18,
                    "line": {"width": 3},
                },
            }
        )
    lay["xaxis"] = {"title": {"text": "date received"}, "anchor": "y3", "gridcolor": "#e6e2da"}
    return figure(data, lay)


def lot_overlay(overview: dict, part_number: str, lot_code: str) -> dict:
    """Unit curves of a lot over its 10–90 % band and median, and the earlier lots' band."""
    grid = overview["grid"]
    x = [float(v) for v in grid]
    band = overview["summary"].band
    flagged_units = {u["unit"] for u in overview["units"] if u["flags"]}
    data = [
        {
            "type": "scatter",
            "mode": "lines",
            "name": "lot 10 %",
            "x": x,
            "y": _num(band["p10"], 1e12),
            "line": {"color": INK, "width": 0},
            "showlegend": False,
            "hoverinfo": "skip",
        },
        {
            "type": "scatter",
            "mode": "lines",
            "name": "lot 10–90 % band",
            "x": x,
            "y": _num(band["p90"], 1e12),
            "fill": "tonexty",
            "fillcolor": BAND_FILL,
            "line": {"color": INK, "width": 0},
            "hoverinfo": "skip",
        },
    ]
    first_plain = first_flag = True
    for u, curve in zip(overview["units"], overview["curves"], strict=True):
        flagged = u["unit"] in flagged_units
        data.append(
            {
                "type": "scatter",
                "mode": "lines",
                "x": x,
                "y": _num(curve, 1e12),
                "name": "flagged unit" if flagged else "unit",
                "legendgroup": "flag" if flagged else "unit",
                "showlegend": first_flag if flagged else first_plain,
                "text": [u["label"]] * len(x),
                "hovertemplate": "unit %{text}<br>%{x:.3g} V: %{y:.4g} pF<extra></extra>",
                "line": {
                    "color": FLAG if flagged else GREY,
                    "width": 2.5 if flagged else 1,
                    "dash": "dot" if flagged else "solid",
                },
            }
        )
        if flagged:
            first_flag = False
        else:
            first_plain = False
    data.append(
        {
            "type": "scatter",
            "mode": "lines",
            "name": "lot median",
            "x": x,
            "y": _num(band["p50"], 1e12),
            "line": {"color": INK, "width": 3},
        }
    )
    hist = overview.get("history")
    if hist:
        for key, label in (("p10", f"earlier lots 10–90 % ({hist['lots']} lots)"), ("p90", None)):
            data.append(
                {
                    "type": "scatter",
                    "mode": "lines",
                    "x": x,
                    "y": _num(hist[key], 1e12),
                    "name": label or "earlier lots 90 %",
                    "legendgroup": "history",
                    "showlegend": label is not None,
                    "line": {"color": AMBER, "width": 2, "dash": "dash"},
                    "hoverinfo": "skip",
                }
            )
    title = f"{part_number} lot {lot_code}: unit C–V curves and bands"
    return figure(data, _layout(title, "reverse bias (V)", "capacitance (pF)"))


def unit_scatter(scatter: list[dict], window, title: str, keep: int = 12) -> dict:
    """C at the low reference bias against swing, one series per lot; the shown lot stands out.

    Only the ``keep`` most recent lots get their own series; older lots share one grey one.
    """
    y_title, _ = axis_label("swing", window)
    x_title, _ = axis_label("c_low", window)
    data = []
    recent = scatter[-keep:]
    older = [s for s in scatter[:-keep] if not s["current"]]
    if older:
        data.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": f"{len(older)} older lots",
                "x": _num([v for s in older for v in s["c_low"]], 1e12),
                "y": _num([v for s in older for v in s["swing"]]),
                "marker": {"color": "#c8c8c8", "symbol": "circle", "size": 5},
                "hoverinfo": "skip",
            }
        )
    k = 0
    for s in scatter:
        if s not in recent and not s["current"]:
            continue
        style = (
            {"color": INK, "symbol": "circle", "size": 11, "line": {"color": "#000", "width": 1.5}}
            if s["current"]
            else {
                "color": PALETTE[1 + k % (len(PALETTE) - 1)],
                "symbol": SYMBOLS[1 + k % (len(SYMBOLS) - 1)],
                "size": 8,
            }
        )
        k += 0 if s["current"] else 1
        data.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": f"lot {s['lot'].code}" + (" (this lot)" if s["current"] else ""),
                "x": _num(s["c_low"], 1e12),
                "y": _num(s["swing"]),
                "text": s["labels"],
                "hovertemplate": "unit %{text}<br>%{x:.4g} pF, swing %{y:.4g}<extra></extra>",
                "marker": style,
            }
        )
    return figure(data, _layout(title, x_title, y_title))


def effect_chart(entry: dict, title: str) -> dict:
    """Units' ΔC/C [%] or temperature coefficient [ppm/°C] against bias, with the lot median."""
    x = entry["grid_v"]
    if entry["quantity"] == "dcc":
        scale, y_title = 100.0, "ΔC/C against dark (%)"
    else:
        scale, y_title = 1.0, "temperature coefficient (ppm/°C)"
    data = []
    for k, u in enumerate(entry["units"]):
        data.append(
            {
                "type": "scatter",
                "mode": "lines",
                "name": f"unit {u['label']}",
                "x": x,
                "y": _num(u[entry["quantity"]], scale),
                "line": {
                    "color": PALETTE[(k + 1) % len(PALETTE)],
                    "width": 1.5,
                    "dash": DASHES[(k + 1) % len(DASHES)],
                },
            }
        )
    data.append(
        {
            "type": "scatter",
            "mode": "lines",
            "name": "lot median",
            "x": x,
            "y": _num(entry["lot_median"], scale),
            "line": {"color": INK, "width": 3},
        }
    )
    return figure(data, _layout(title, "reverse bias (V)", y_title))


def compare_bands(summaries: list, title: str) -> dict:
    """Each lot's median curve and 10–90 % band, one colour and dash per lot."""
    data = []
    for k, s in enumerate(summaries):
        band = s.band or {}
        if not band:
            continue
        x = band["bias_v"]
        colour = PALETTE[k % len(PALETTE)]
        data += [
            {
                "type": "scatter",
                "mode": "lines",
                "x": x,
                "y": _num(band["p10"], 1e12),
                "legendgroup": str(k),
                "showlegend": False,
                "line": {"color": colour, "width": 1, "dash": DASHES[k % len(DASHES)]},
                "name": f"lot {s.lot.code} 10 %",
                "hoverinfo": "skip",
            },
            {
                "type": "scatter",
                "mode": "lines",
                "x": x,
                "y": _num(band["p90"], 1e12),
                "legendgroup": str(k),
                "showlegend": False,
                "line": {"color": colour, "width": 1, "dash": DASHES[k % len(DASHES)]},
                "name": f"lot {s.lot.code} 90 %",
                "hoverinfo": "skip",
            },
            {
                "type": "scatter",
                "mode": "lines+markers",
                "x": x,
                "y": _num(band["p50"], 1e12),
                "legendgroup": str(k),
                "name": f"lot {s.lot.code} median (thin lines: 10–90 %)",
                "line": {"color": colour, "width": 2.5, "dash": DASHES[k % len(DASHES)]},
                "marker": {
                    "symbol": SYMBOLS[k % len(SYMBOLS)],
                    "size": 6,
                    "color": colour,
                    "maxdisplayed": 12,
                },
            },
        ]
    return figure(data, _layout(title, "reverse bias (V)", "capacitance (pF)"))
