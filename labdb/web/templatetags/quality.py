"""Quality panels of the part and lot pages, and small filters for flags and figures."""

from __future__ import annotations

from django import template

from labdb.quality.services import (
    FIGURE_LABELS,
    RULES,
    condition_effects,
    lot_overview,
    part_overview,
)
from labdb.web import quality_charts as qc

register = template.Library()

RULE_SHORT = {
    "unit_zscore": "z-score",
    "unit_curve": "curve distance",
    "unit_fit": "poor fit",
    "unit_monotonic": "C rises",
    "unit_rating": "over rating",
    "unit_spec": "out of spec",
    "lot_chart": "control chart",
    "lot_shift": "shift",
    "lot_cpk": "Cpk",
}


@register.inclusion_tag("web/includes/part_quality.html", takes_context=True)
def part_quality_panel(context):
    """Lots table with medians, Cpk and open flags, and lot-median control charts."""
    request, part = context["request"], context["part"]
    ov = part_overview(part, request.GET.get("condition"))
    charts = []
    if ov["rows"]:
        title = f"{part.part_number}: lot medians by date received ({ov['condition'].label})"
        charts.append(
            {
                "id": "lot-history",
                "figure": qc.lot_history(ov["rows"], ov["window_v"], title),
                "alt": "Lot medians of C at both reference biases and of swing in received order, with the "
                "control limits each lot was judged against and flagged lots ringed; the lots "
                "table gives the same values.",
            }
        )
    return {
        "part": part,
        "ov": ov,
        "charts": charts,
        "can_curate": context.get("can_curate"),
        "request": request,
    }


@register.inclusion_tag("web/includes/lot_quality.html", takes_context=True)
def lot_quality_panel(context):
    """Unit curves with bands, unit table with z-scores, part-wide scatter, condition effects."""
    request, lot, part = context["request"], context["lot"], context["part"]
    ov = lot_overview(lot, request.GET.get("condition"))
    charts = {}
    effects = {"light": [], "temperature": []}
    if ov["summary"] is not None:
        window = ov["summary"].figures["window_v"]
        if ov["grid"].size:
            charts["overlay"] = qc.lot_overlay(ov, part.part_number, lot.code)
        charts["scatter"] = qc.unit_scatter(
            ov["scatter"], window, f"{part.part_number}: units by lot, {ov['condition'].label}"
        )
        effects = condition_effects(lot.summaries.all())
        for kind in ("light", "temperature"):
            for k, e in enumerate(effects[kind]):
                e["chart_id"] = f"effect-{kind}-{k}"
                e["figure"] = qc.effect_chart(e, f"Lot {lot.code}: {e['title']}")
                # Table beside the chart: each unit at both ends of the bias grid.
                e["rows"] = [
                    {
                        "label": u["label"],
                        "low": u[e["quantity"]][0],
                        "high": u[e["quantity"]][-1],
                        "temperatures": u.get("temperatures_c"),
                    }
                    for u in e["units"]
                ]
                e["median_low"], e["median_high"] = e["lot_median"][0], e["lot_median"][-1]
    return {
        "lot": lot,
        "part": part,
        "ov": ov,
        "charts": charts,
        "effects": effects,
        "request": request,
    }


@register.filter
def rule_text(rule: str) -> str:
    """A rule key in words."""
    return RULES.get(rule, rule)


@register.filter
def rule_short(rule: str) -> str:
    """A rule key in two or three words, for tags."""
    return RULE_SHORT.get(rule, rule)


@register.filter
def figure_text(figure: str) -> str:
    """A figure key in words."""
    return FIGURE_LABELS.get(figure, figure)


@register.filter
def get(mapping, key):
    """``mapping[key]`` in a template, None when absent."""
    try:
        return mapping.get(key)
    except AttributeError:
        return None


@register.filter
def pct(value, digits=2):
    """A fraction shown in per cent, signed."""
    if value is None:
        return "—"
    return f"{float(value) * 100:+.{int(digits)}g} %"


@register.filter
def scaled(value, factor):
    """``value × factor`` to 4 significant figures (e.g. a fraction in %); — when missing."""
    if value is None:
        return "—"
    return f"{float(value) * float(factor):.4g}"


@register.filter
def zfmt(value):
    """A z-score to one decimal, with sign; blank when not computed."""
    if value is None:
        return "—"
    return f"{float(value):+.1f}"
