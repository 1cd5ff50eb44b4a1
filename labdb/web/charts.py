"""Plotly figure dictionaries for the pages: one house style, titled, units on every axis."""

from __future__ import annotations

import numpy as np

# Colours chosen to stay distinguishable in greyscale (different lightness) and for
# common colour-vision deficiencies; symbols differ too.
PALETTE = ["#23395d", "#c9822b", "#5b8c5a", "#8c3b4a", "#6f6aa8", "#2e8b9a", "#8a8a8a"]
SYMBOLS = ["circle", "square", "diamond", "triangle-up", "x", "cross", "star"]


def layout(title: str, x_title: str, y_title: str, **extra) -> dict:
    base = {
        "title": {"text": title, "x": 0.01, "font": {"size": 15}},
        "xaxis": {"title": {"text": x_title}, "gridcolor": "#e6e2da", "zeroline": False},
        "yaxis": {"title": {"text": y_title}, "gridcolor": "#e6e2da", "zeroline": False},
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#ffffff",
        "font": {"family": "system-ui, sans-serif", "size": 12, "color": "#1d2b3a"},
        "margin": {"l": 70, "r": 20, "t": 45, "b": 55},
        "legend": {"orientation": "h", "y": -0.2},
    }
    base.update(extra)
    return base


def figure(data: list[dict], lay: dict) -> dict:
    return {"data": data, "layout": lay, "config": {"responsive": True, "displaylogo": False}}


def cv_with_fit(bias_v, capacitance_f, fit_bias_v=None, fit_c_f=None, title="C–V sweep") -> dict:
    """Measured points and the fitted curve, in pF against reverse bias."""
    data = [
        {
            "type": "scatter",
            "mode": "markers",
            "name": "measured",
            "x": list(map(float, bias_v)),
            "y": [float(c) * 1e12 for c in capacitance_f],
            "marker": {"color": PALETTE[0], "symbol": "circle", "size": 6},
        }
    ]
    if fit_bias_v is not None:
        data.append(
            {
                "type": "scatter",
                "mode": "lines",
                "name": "fitted model",
                "x": list(map(float, fit_bias_v)),
                "y": [float(c) * 1e12 for c in fit_c_f],
                "line": {"color": PALETTE[1], "width": 2, "dash": "solid"},
            }
        )
    return figure(data, layout(title, "reverse bias (V)", "capacitance (pF)"))


def residuals(bias_v, rel_residual, title="Fit residuals") -> dict:
    data = [
        {
            "type": "scatter",
            "mode": "markers",
            "name": "residual",
            "x": list(map(float, bias_v)),
            "y": [float(r) * 100 for r in rel_residual],
            "marker": {"color": PALETTE[3], "symbol": "diamond", "size": 6},
        }
    ]
    lay = layout(title, "reverse bias (V)", "relative residual (%)", showlegend=False)
    lay["shapes"] = [
        {
            "type": "line",
            "xref": "paper",
            "x0": 0,
            "x1": 1,
            "y0": 0,
            "y1": 0,
            "line": {"color": "#8a8a8a", "width": 1},
        }
    ]
    return figure(data, lay)


def smooth_grid(lo: float, hi: float, n: int = 120) -> np.ndarray:
    return np.linspace(lo, hi, n)
