"""Recompute lot summaries, lot models and flags of a part: the one service behind the hook.

Idempotent: a lot summary is rewritten only when its inputs (the sweeps' current fits and
the part's settings) changed, a lot-model fit version only when the median curve changed,
and flags only when their findings changed.
"""

from __future__ import annotations

import hashlib
import json
from collections import defaultdict
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
from django.db import transaction
from django.db.models import Max, Min

from labdb.catalog.models import Lot, Part
from labdb.measurements.models import Sweep
from labdb.quality.models import LotSummary
from labdb.quality.services.between import LotPoint, capability, judge_sequence, lot_proposals
from labdb.quality.services.conditions import condition_key, reference_window, temperature_band
from labdb.quality.services.curves import rise_checks
from labdb.quality.services.flags import json_safe, sync_flags
from labdb.quality.services.lotfits import fit_lot_models
from labdb.quality.services.newest import refresh_part_copies
from labdb.quality.services.rules import MIN_UNITS_LOT, max_rms_rel, min_cpk
from labdb.quality.services.summaries import JUDGED, MIN_UNITS_Z, SweepRow, summarize
from labdb.quality.services.within import may_raise, unit_proposals

#: Bump when the way figures or rules are computed changes: every summary is then redone.
QUALITY_VERSION = "labdb-quality 3"

_ROW_FIELDS = (
    "pk",
    "unit_id",
    "unit__label",
    "unit__lot_id",
    "illumination",
    "temperature_c",
    "bias_min_v",
    "bias_max_v",
    "current_fit_id",
    "current_fit__model",
    "current_fit__cjo",
    "current_fit__vj",
    "current_fit__m",
    "current_fit__cp",
    "current_fit__rms_rel",
    "current_fit__converged",
    "measured_at",
)


@dataclass
class RecomputeReport:
    """What one recomputation of a part did (counts)."""

    part: str
    summarised: int = 0
    unchanged: int = 0
    deleted: int = 0
    lot_fits: int = 0
    lot_fit_failures: list[str] = field(default_factory=list)
    flags: dict = field(default_factory=dict)


def recompute_lots(lot_ids: Iterable[int]) -> list[RecomputeReport]:
    """Recompute the quality of these lots and what depends on them (later lots' judgement).

    Parameters
    ----------
    lot_ids : iterable of int
        Lots whose current fits changed.

    Returns
    -------
    list of RecomputeReport
        One per part touched.
    """
    by_part: dict[int, list[int]] = defaultdict(list)
    for lot_id, part_id in Lot.objects.filter(pk__in=set(lot_ids)).values_list("pk", "part_id"):
        by_part[part_id].append(lot_id)
    return [
        recompute_part(part, lot_ids=by_part[part.pk])
        for part in Part.objects.filter(pk__in=by_part).order_by("part_number")
    ]


def recompute_part(
    part: Part, *, lot_ids: Iterable[int] | None = None, force: bool = False
) -> RecomputeReport:
    """Recompute lot summaries, lot models and flags of one part.

    Parameters
    ----------
    part : Part
        The part.
    lot_ids : iterable of int, optional
        Only these lots' inputs changed (the others are re-read from their summaries unless
        the part's settings changed). Default: every lot.
    force : bool
        Rebuild every summary even when its inputs are unchanged.

    Returns
    -------
    RecomputeReport
    """
    report = RecomputeReport(part=part.part_number)
    with transaction.atomic():
        part = Part.objects.select_for_update().get(pk=part.pk)
        live = Sweep.objects.filter(
            unit__lot__part=part,
            current_fit__isnull=False,
            archived=False,
            unit__archived=False,
            unit__lot__archived=False,
        )
        span = live.aggregate(lo=Min("bias_min_v"), hi=Max("bias_max_v"))
        window = None if span["lo"] is None else reference_window(part, span["lo"], span["hi"])
        context = _context(part, window)
        ctx_sha = _sha(json.dumps(context, sort_keys=True))
        lots = {
            r[0]: r[1:]
            for r in Lot.objects.filter(part=part).values_list(
                "pk", "received_on", "created_at", "code"
            )
        }
        # Only the digest of each summary: the full figures are read for recomputed lots.
        summaries = {
            (s.lot_id, s.illumination, s.temperature_c): s
            for s in LotSummary.objects.filter(lot__part=part).defer("figures", "band")
        }
        if lot_ids is None or force:
            candidates = set(lots)
        else:
            stale = {s.lot_id for s in summaries.values() if s.digest.get("context_sha") != ctx_sha}
            candidates = (set(lot_ids) & set(lots)) | stale
        groups = _groups(live.filter(unit__lot_id__in=candidates)) if window else {}
        changed = {}
        for key, rows in groups.items():
            sha = _sha(
                ctx_sha
                + "|"
                + ";".join(f"{r.sweep}:{r.fit}:{r.temperature_c!r}:{r.measured_at}" for r in rows)
            )
            old = summaries.get(key)
            if force or old is None or old.inputs_sha256 != sha:
                changed[key] = (rows, sha)
        report.unchanged = len(groups) - len(changed)
        _shape_checks(changed, {key[0] for key in changed})
        _summarise(part, lots, window, context, ctx_sha, changed, summaries)
        report.summarised = len(changed)
        gone = [s for key, s in summaries.items() if s.lot_id in candidates and key not in groups]
        if gone:
            LotSummary.objects.filter(pk__in=[s.pk for s in gone]).delete()
            for s in gone:
                del summaries[(s.lot_id, s.illumination, s.temperature_c)]
            report.deleted = len(gone)
        judged = _judge_between(part, lots, summaries, set(changed), ctx_sha)
        # One statement per summary: Django's bulk paths (UNNEST inserts, CASE updates)
        # are far slower than this with large JSON values on PostgreSQL.
        for key in sorted(set(changed) | judged):
            s = summaries[key]
            s.received_on = lots[key[0]][0]
            if key in changed:
                s.save()
            else:
                s.save(update_fields=["digest", "received_on", "computed_at"])
        report.lot_fits, report.lot_fit_failures = fit_lot_models([summaries[k] for k in changed])
        report.flags = sync_flags(part, _proposals(part, summaries))
        refresh_part_copies([part.pk])
    return report


def _context(part: Part, window) -> dict:
    """Everything besides the fits that a summary or a lot judgement depends on."""
    return {
        "version": QUALITY_VERSION,
        "window_v": None if window is None else [window.low_v, window.high_v],
        "spec": [part.spec_bias_v, part.spec_c_min_f, part.spec_c_max_f, part.spec_min_swing],
        "shift_tolerance": part.shift_tolerance,
        "rated_reverse_v": part.rated_reverse_v,
        "max_rms_rel": max_rms_rel(),
        "min_cpk": min_cpk(),
    }


def _sha(text: str) -> str:
    return hashlib.sha256(text.encode()).hexdigest()


def _groups(qs) -> dict[tuple, list[SweepRow]]:
    """The sweeps by (lot, illumination, temperature band), each with its current fit."""
    out: dict[tuple, list[SweepRow]] = defaultdict(list)
    for v in qs.order_by("pk").values_list(*_ROW_FIELDS):
        row = SweepRow(*v)
        out[(row.lot, row.illumination, temperature_band(row.temperature_c))].append(row)
    return dict(out)


def _shape_checks(changed: dict, lot_ids: set) -> None:
    """Fill max_rise and noise of each sweep: from the lots' old summaries, else its points."""
    cache = {
        sw["fit"]: (sw["max_rise"], sw["noise"])
        for figures in LotSummary.objects.filter(lot_id__in=lot_ids).values_list(
            "figures", flat=True
        )
        for u in figures.get("units", [])
        for sw in u["sweeps"]
    }
    need = []
    for rows, _ in changed.values():
        for r in rows:
            if r.fit in cache:
                r.max_rise, r.noise = (np.nan if x is None else x for x in cache[r.fit])
            else:
                need.append(r)
    if not need:
        return
    # By lot, not by a list of thousands of sweep ids: Django and the driver spend longer
    # quoting such a list than the database spends answering.
    wanted = {r.sweep for r in need}
    lots = sorted({r.lot for r in need})
    points = {
        pk: pts
        for pk, pts in Sweep.objects.filter(
            unit__lot_id__in=lots, archived=False, current_fit__isnull=False
        ).values_list("pk", "points")
        if pk in wanted
    }
    bias = [np.asarray(points[r.sweep]["bias_v"], dtype=float) for r in need]
    cap = [np.asarray(points[r.sweep]["capacitance_f"], dtype=float) for r in need]
    params = np.array([[r.cjo, r.vj, r.m, r.cp] for r in need], dtype=float)
    rise, noise = rise_checks(bias, cap, params)
    for r, a, b in zip(need, rise, noise, strict=True):
        r.max_rise, r.noise = float(a), float(b)


def _summarise(part, lots: dict, window, context, ctx_sha, changed: dict, summaries: dict) -> None:
    """Compute the changed summaries in memory (new rows are saved later, once)."""
    for key, (rows, sha) in changed.items():
        lf = summarize(rows, window, part.spec_bias_v, context)
        # summarize() builds plain JSON already; only the capability dict needs cleaning.
        cpk = json_safe(capability(part, lf.figures["units"]))
        s = summaries.get(key)
        if s is None:
            s = LotSummary(lot_id=key[0], illumination=key[1], temperature_c=key[2], part=part)
            summaries[key] = s
        for name, value in lf.columns.items():
            setattr(s, name, value)
        s.part_id, s.received_on = part.pk, lots[key[0]][0]
        s.figures, s.band, s.inputs_sha256 = dict(lf.figures, cpk=cpk), lf.band, sha
        s.digest = make_digest(part, lf.figures, cpk, ctx_sha)


def make_digest(part, figures: dict, cpk: dict, ctx_sha: str) -> dict:
    """The small part of a summary that judging other lots and listing findings reads."""
    units = figures["units"]
    return {
        "context_sha": ctx_sha,
        "n_units": len(units),
        "window_v": figures["window_v"],
        "window_source": figures["window_source"],
        "spec_bias_v": figures["spec_bias_v"],
        "labels": [u["label"] for u in units],
        "stats": figures["stats"],
        "values": {name: [u["figures"][name] for u in units] for name in JUDGED},
        "flag_units": [u for u in units if may_raise(part, u, figures["spec_bias_v"])],
        "cpk": cpk,
        "between": {},
    }


def lot_order(part: Part, lots: dict | None = None) -> dict[int, int]:
    """Position of each lot of a part in received order.

    Lots are ordered by the date received, then (for lots without one) the date entered,
    then lot code; this is the time axis of the part's control charts. ``lots`` (id →
    (received_on, created_at, code)) saves the query when the caller has them.
    """
    if lots is None:
        lots = {
            r[0]: r[1:]
            for r in Lot.objects.filter(part=part).values_list(
                "pk", "received_on", "created_at", "code"
            )
        }
    ordered = sorted(lots.items(), key=lambda kv: (kv[1][0] or kv[1][1].date(), kv[1][2], kv[0]))
    return {pk: i for i, (pk, _) in enumerate(ordered)}


def _judge_between(part, lots: dict, summaries: dict, changed: set, ctx_sha: str) -> set:
    """Between-lot results of every lot whose own inputs or earlier lots changed."""
    order = lot_order(part, lots)
    by_cond: dict[tuple, list] = defaultdict(list)
    for key, s in summaries.items():
        by_cond[key[1:]].append((order[key[0]], key, s))
    dirty = set()
    for entries in by_cond.values():
        entries.sort()
        judged = [(key, s) for _, key, s in entries if s.n_units >= MIN_UNITS_LOT]
        running = hashlib.sha256(ctx_sha.encode())
        todo, earlier_sha = set(), []
        for i, (key, s) in enumerate(judged):
            earlier_sha.append(running.hexdigest())
            if key in changed or s.digest.get("between", {}).get("earlier_sha") != earlier_sha[i]:
                todo.add(i)
            running.update(f"{key[0]}:{s.inputs_sha256};".encode())
        if todo:
            points = [_point(s) for _, s in judged]
            for i, result in judge_sequence(points, todo, part.shift_tolerance).items():
                key, s = judged[i]
                s.digest["between"] = json_safe(dict(result, earlier_sha=earlier_sha[i]))
                dirty.add(key)
        for _, key, s in entries:
            if s.n_units < MIN_UNITS_LOT and s.digest.get("between") != {}:
                s.digest["between"] = {}
                dirty.add(key)
    return dirty


def _proposals(part, summaries: dict) -> list:
    """Every finding on the part's current summaries, within lots and between them."""
    pooled = _pooled_spreads(summaries)
    out = []
    for (lot_id, illumination, band), s in sorted(summaries.items()):
        cond = condition_key(illumination, band)
        out += unit_proposals(part, lot_id, cond, s.digest, pooled.get((illumination, band), {}))
        out += lot_proposals(part, lot_id, cond, s.digest)
    return out


def _pooled_spreads(summaries: dict) -> dict:
    """Per condition set, the part's typical relative unit spread of each judged figure.

    The median over lots (with enough units for z-scores) of σ_MAD/|median|, and of the
    median curve distance: what "ordinary" looks like for this part, so a lot that came out
    tight by chance does not make ordinary units look like outliers.
    """
    spreads: dict = defaultdict(lambda: defaultdict(list))
    for (_, illumination, band), s in summaries.items():
        if s.n_units < MIN_UNITS_Z:
            continue
        stats = s.digest["stats"]
        for name in JUDGED:
            med, sig = stats[name]["median"], stats[name]["sigma"]
            if med and sig is not None:
                spreads[(illumination, band)][name].append(sig / abs(med))
        if stats["distance"]["median"] is not None:
            spreads[(illumination, band)]["distance"].append(stats["distance"]["median"])
    return {
        cond: {name: float(np.median(v)) for name, v in figs.items()}
        for cond, figs in spreads.items()
    }


def _point(s: LotSummary) -> LotPoint:
    d = s.digest
    return LotPoint(
        stored=d.get("between", {}),
        lot=s.lot_id,
        medians={name: d["stats"][name]["median"] for name in JUDGED},
        sigmas={name: d["stats"][name]["sigma"] for name in JUDGED},
        units={name: np.array(d["values"][name], dtype=float) for name in JUDGED},
    )
