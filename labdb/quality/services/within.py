"""Within-lot findings on units: z-scores, curve distance, poor fits, shape, rating, spec."""

from __future__ import annotations

from labdb.quality.services.curves import rise_limit
from labdb.quality.services.rules import (
    FIGURE_LABELS,
    MIN_RELATIVE_DEVIATION,
    Z_LIMIT,
    Proposal,
    max_rms_rel,
)
from labdb.stats import MAD_QUANTILE


def _pf(c: float) -> str:
    return f"{c * 1e12:.4g} pF"


def _show(figure: str, value: float) -> str:
    return _pf(value) if figure.startswith("c_") else f"{value:.4g}"


def unit_proposals(part, lot_id: int, condition: str, digest: dict, pooled: dict) -> list[Proposal]:
    """Every within-lot finding of one lot summary's units.

    A unit stands out when its modified z-score within the lot is beyond 3.5 and it is
    also beyond 3.5 of the part's typical unit spread (``pooled``, the median over the
    part's lots of σ_MAD/median, and of the median curve distance). The second test keeps
    a lot whose units happen to agree closely from flagging an ordinary unit: the MAD of 8
    to 25 values scatters by 20–30 %, and with |z| > 3.5 alone about 2 % of normal units in
    lots of 9 are flagged (simulated here; 0.5 % in lots of 25).

    Parameters
    ----------
    part : Part
        Supplies ``rated_reverse_v`` [V] and the spec limits.
    lot_id : int
        The lot.
    condition : str
        Condition key, e.g. ``"dark@25C"``.
    digest : dict
        ``LotSummary.digest``: lot statistics and the units that :func:`may_raise` kept.
    pooled : dict
        Figure (and ``"distance"``) → the part's typical relative spread [1].

    Returns
    -------
    list of Proposal
    """
    out: list[Proposal] = []
    stats = digest["stats"]
    window = digest["window_v"]
    for u in digest["flag_units"]:

        def make(rule, figure, summary, evidence, value, limit, _u=u):
            return Proposal(
                part_id=part.pk,
                lot_id=lot_id,
                unit_id=_u["unit"],
                rule=rule,
                figure=figure,
                condition=condition,
                summary=f"unit {_u['label']}: {summary}"[:300],
                evidence=evidence,
                value=value,
                limit=limit,
            )

        for name, z in u["z"].items():
            if name == "distance" or z is None or abs(z) <= Z_LIMIT:
                continue
            value, med = u["figures"][name], stats[name]["median"]
            typical = max(pooled.get(name, 0.0), MIN_RELATIVE_DEVIATION / Z_LIMIT) * abs(med)
            z_part = (value - med) / typical
            if abs(z_part) <= Z_LIMIT:
                continue
            where = (
                f" at {window[0] if name == 'c_low' else window[1]:g} V" if name != "swing" else ""
            )
            out.append(
                make(
                    "unit_zscore",
                    name,
                    f"{FIGURE_LABELS[name]}{where} {_show(name, value)} against lot median "
                    f"{_show(name, med)}, modified z = {z:+.1f}",
                    {
                        "value": value,
                        "lot_median": med,
                        "lot_sigma": stats[name]["sigma"],
                        "z": z,
                        "z_limit": Z_LIMIT,
                        "n_units": stats[name]["n"],
                    },
                    z,
                    Z_LIMIT if z > 0 else -Z_LIMIT,
                )
            )
        dz, dist = u["z"].get("distance"), u["distance"]
        typical = max(pooled.get("distance", 0.0), MIN_RELATIVE_DEVIATION * MAD_QUANTILE / Z_LIMIT)
        if (
            dz is not None
            and dist is not None
            and dz > Z_LIMIT
            and MAD_QUANTILE * dist / typical > Z_LIMIT
        ):
            out.append(
                make(
                    "unit_curve",
                    "distance",
                    f"curve {dist * 100:.2g} % (RMS) from the lot's median curve, modified z = {dz:.1f}",
                    {
                        "distance": dist,
                        "z": dz,
                        "z_limit": Z_LIMIT,
                        "lot_median_distance": stats["distance"]["median"],
                    },
                    dz,
                    Z_LIMIT,
                )
            )
        out += _sweep_checks(part, u, make)
        out += _spec_checks(part, u, digest.get("spec_bias_v"), make)
    return out


def may_raise(part, u: dict, spec_bias_v: float | None) -> bool:
    """Could this unit raise any within-lot finding? A cheap test, run once per summary.

    True when a z-score is beyond the limit or a sweep breaks a shape, fit or rating rule,
    or the part has a spec; the full rules then run on these units only.
    """
    if spec_bias_v is not None or part.spec_min_swing is not None:
        return True
    if any(z is not None and abs(z) > Z_LIMIT for z in u["z"].values()):
        return True
    rms_limit, rated = max_rms_rel(), part.rated_reverse_v
    return any(
        s["rms_rel"] > rms_limit
        or not s["converged"]
        or _rises(s)
        or (rated is not None and s["bias_max_v"] > rated)
        for s in u["sweeps"]
    )


def _rises(s: dict) -> bool:
    """Does a sweep's C rise with reverse bias by more than its noise allows?"""
    return (
        s["max_rise"] is not None
        and s["noise"] is not None
        and s["max_rise"] > rise_limit(s["noise"])
    )


def _sweep_checks(part, u: dict, make) -> list[Proposal]:
    out = []
    limit = max_rms_rel()
    poor = [s for s in u["sweeps"] if s["rms_rel"] > limit or not s["converged"]]
    if poor:
        worst = max(s["rms_rel"] for s in poor)
        out.append(
            make(
                "unit_fit",
                "rms_rel",
                f"fit residual {worst * 100:.2g} % RMS (limit {limit * 100:g} %)"
                + ("" if all(s["converged"] for s in poor) else "; a fit did not converge"),
                {
                    "sweeps": [
                        {k: s[k] for k in ("sweep", "fit", "rms_rel", "converged")} for s in poor
                    ],
                    "limit": limit,
                },
                worst,
                limit,
            )
        )
    rising = [dict(s, rise_limit=rise_limit(s["noise"])) for s in u["sweeps"] if _rises(s)]
    if rising:
        worst = max(rising, key=lambda s: s["max_rise"] / s["rise_limit"])
        out.append(
            make(
                "unit_monotonic",
                "max_rise",
                f"C rises by {worst['max_rise'] * 100:.2g} % between neighbouring biases "
                f"(noise allows {worst['rise_limit'] * 100:.2g} %)",
                {
                    "sweeps": [
                        {k: s[k] for k in ("sweep", "max_rise", "noise", "rise_limit")}
                        for s in rising
                    ]
                },
                worst["max_rise"],
                worst["rise_limit"],
            )
        )
    rated = part.rated_reverse_v
    if rated is not None:
        over = [s for s in u["sweeps"] if s["bias_max_v"] > rated]
        if over:
            top = max(s["bias_max_v"] for s in over)
            out.append(
                make(
                    "unit_rating",
                    "bias_max_v",
                    f"swept to {top:g} V reverse, beyond the rated {rated:g} V; the unit may be damaged",
                    {
                        "sweeps": [
                            {"sweep": s["sweep"], "bias_max_v": s["bias_max_v"]} for s in over
                        ],
                        "rated_reverse_v": rated,
                    },
                    top,
                    rated,
                )
            )
    return out


def _spec_checks(part, u: dict, spec_bias_v: float | None, make) -> list[Proposal]:
    out = []
    c = u["figures"].get("c_spec")
    if spec_bias_v is not None and c is not None:
        for bound, limit, bad in (
            ("min", part.spec_c_min_f, lambda x, lim: x < lim),
            ("max", part.spec_c_max_f, lambda x, lim: x > lim),
        ):
            if limit is not None and bad(c, limit):
                out.append(
                    make(
                        "unit_spec",
                        "c_spec",
                        f"C at {spec_bias_v:g} V is {_pf(c)}, outside the spec {bound} {_pf(limit)}",
                        {"value": c, "limit": limit, "bound": bound, "bias_v": spec_bias_v},
                        c,
                        limit,
                    )
                )
    swing = u["figures"].get("swing")
    if part.spec_min_swing is not None and swing is not None and swing < part.spec_min_swing:
        out.append(
            make(
                "unit_spec",
                "swing",
                f"swing {swing:.4g} below the spec minimum {part.spec_min_swing:g}",
                {"value": swing, "limit": part.spec_min_swing, "bound": "min"},
                swing,
                part.spec_min_swing,
            )
        )
    return out
