"""Plotly figures of impedance sweeps and bias series, in the house style of ``charts.py``.

Frequency axes are logarithmic in MHz; the self-resonant frequency is drawn as a dotted
vertical trace (a trace rather than a shape, so it has a legend entry and needs no log
coordinates). Colours and dashes come from the shared palette, readable in greyscale.
"""

from __future__ import annotations

import math

import numpy as np

from labdb.web.charts import PALETTE, figure, layout


def _measured(x, y, name="measured") -> dict:
    return {
        "type": "scatter",
        "mode": "markers",
        "name": name,
        "x": [float(v) for v in x],
        "y": [None if not math.isfinite(v) else float(v) for v in y],
        "marker": {"color": PALETTE[0], "symbol": "circle", "size": 4},
    }


def _model(x, y, name) -> dict:
    return {
        "type": "scatter",
        "mode": "lines",
        "name": name,
        "x": [float(v) for v in x],
        "y": [None if not math.isfinite(v) else float(v) for v in y],
        "line": {"color": PALETTE[1], "width": 2, "dash": "solid"},
    }


def _srf_marker(srf_hz: float, y_lo: float, y_hi: float) -> dict:
    return {
        "type": "scatter",
        "mode": "lines",
        "name": f"self-resonance {srf_hz / 1e6:.4g} MHz",
        "x": [srf_hz / 1e6, srf_hz / 1e6],
        "y": [y_lo, y_hi],
        "line": {"color": PALETTE[3], "width": 2, "dash": "dot"},
        "hoverinfo": "name",
    }


def _grid(f: np.ndarray) -> np.ndarray:
    return np.geomspace(float(f.min()), float(f.max()), 400)


def _srf_in_range(fit, f: np.ndarray) -> bool:
    return fit is not None and math.isfinite(fit.srf_hz) and f.min() <= fit.srf_hz <= f.max()


def magnitude_chart(f: np.ndarray, z: np.ndarray, fit=None, title: str = "|Z| against frequency"):
    """|Z| [Ω] against test frequency [MHz], log–log, with the fitted equivalent and its SRF."""
    mag = np.abs(z)
    data = [_measured(f / 1e6, mag)]
    if fit is not None:
        g = _grid(f)
        data.append(_model(g / 1e6, np.abs(fit.impedance(g)), "fitted series R–L–C"))
    if _srf_in_range(fit, f):
        data.append(_srf_marker(fit.srf_hz, float(mag.min()), float(mag.max())))
    lay = layout(title, "test frequency (MHz)", "|Z| (Ω)")
    lay["xaxis"]["type"] = "log"
    lay["yaxis"]["type"] = "log"
    return figure(data, lay)


def phase_chart(f: np.ndarray, z: np.ndarray, fit=None, title: str = "Phase against frequency"):
    """Phase of Z [°] against test frequency [MHz] (log), with the fitted equivalent."""
    data = [_measured(f / 1e6, np.degrees(np.angle(z)))]
    if fit is not None:
        g = _grid(f)
        data.append(_model(g / 1e6, np.degrees(np.angle(fit.impedance(g))), "fitted series R–L–C"))
    if _srf_in_range(fit, f):
        data.append(_srf_marker(fit.srf_hz, -90.0, 90.0))
    lay = layout(title, "test frequency (MHz)", "phase of Z (°)")
    lay["xaxis"]["type"] = "log"
    lay["yaxis"]["range"] = [-95, 95]
    return figure(data, lay)


def q_chart(f: np.ndarray, z: np.ndarray, fit=None, title: str = "Q against frequency"):
    """Q = |X|/R against test frequency [MHz], log–log: the readings and the fitted model."""
    from labdb.physics.impedance import quality_factor

    q = quality_factor(z)
    shown = np.where(q > 0, q, np.nan)  # a log axis cannot show Q = 0 or negative R
    data = [_measured(f / 1e6, shown, "from the readings")]
    if fit is not None:
        g = _grid(f)
        qm = fit.q_at(g)
        data.append(_model(g / 1e6, np.where(qm > 0, qm, np.nan), "fitted series R–L–C"))
    lay = layout(title, "test frequency (MHz)", "Q = |X|/R")
    lay["xaxis"]["type"] = "log"
    lay["yaxis"]["type"] = "log"
    return figure(data, lay)


def q_bias_chart(bias_v, q, frequency_hz: float, title: str) -> dict:
    """Q [1] against reverse bias [V] at one test frequency."""
    data = [
        {
            "type": "scatter",
            "mode": "lines+markers",
            "name": f"Q at {frequency_hz / 1e6:.4g} MHz",
            "x": [float(v) for v in bias_v],
            "y": [None if v is None or not math.isfinite(v) else float(v) for v in q],
            "marker": {"color": PALETTE[2], "symbol": "diamond", "size": 7},
            "line": {"color": PALETTE[2], "width": 1, "dash": "dash"},
        }
    ]
    return figure(data, layout(title, "reverse bias (V)", "Q = |X|/R"))
