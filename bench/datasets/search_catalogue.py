"""Generated catalogue for the search benchmark: parts × lots × units with unit fits, via COPY.

Every unit gets one dark 25 °C sweep with its current fit; every lot gets a lot summary
computed here with numpy from the generated unit parameters (the quality service is not
involved: the benchmark measures search, and 100,000 lot recomputations would dominate).
The stored points are abbreviated to the two ends of the sweep — search never reads them —
so the database stays a few hundred megabytes.
"""

from __future__ import annotations

import datetime as dt
import io
import json
import time

import numpy as np

PREFIX = "BXS-"
KINDS = np.array(["varactor", "led", "rectifier", "zener", "photodiode"])
WORDS = (
    "tuning silicon hyperabrupt abrupt red green blue amber diffused clear glass axial "
    "smd sod323 sot23 do35 high low power signal general purpose fast recovery".split()
)


def _now() -> str:
    return dt.datetime.now(dt.UTC).isoformat()


class _Table:
    """One model's rows written as PostgreSQL COPY text, unspecified columns from defaults."""

    def __init__(self, model, given: list[str]):
        self.model = model
        self.columns: list[str] = []
        self.given: list[str] = []
        self.fixed: dict[str, str] = {}
        now = _now()
        for f in model._meta.concrete_fields:
            key = f.attname
            self.columns.append(f.column)
            if key in given:
                self.given.append(key)
                continue
            if getattr(f, "auto_now", False) or getattr(f, "auto_now_add", False):
                self.fixed[f.column] = now
                continue
            value = f.get_default()  # "" for text fields, None for nullable ones
            if value is None and not f.null:
                raise SystemExit(
                    f"bench: {model.__name__}.{f.name} needs a value the generator lacks"
                )
            self.fixed[f.column] = _cell(value, f)
        missing = set(given) - set(self.given)
        if missing:
            raise SystemExit(f"bench: {model.__name__} has no fields {sorted(missing)}")

    def copy(self, cursor, columns: dict[str, list]) -> None:
        n = len(next(iter(columns.values())))
        cells = []
        for f in self.model._meta.concrete_fields:
            if f.column in self.fixed:
                cells.append([self.fixed[f.column]] * n)
            else:
                cells.append([_cell(v, f) for v in columns[f.attname]])
        buf = io.StringIO()
        for row in zip(*cells, strict=True):
            buf.write("\t".join(row))
            buf.write("\n")
        cols = ", ".join(f'"{c}"' for c in self.columns)
        with cursor.copy(f'COPY "{self.model._meta.db_table}" ({cols}) FROM STDIN') as cp:
            cp.write(buf.getvalue())


def _cell(value, field) -> str:
    from django.db.models import JSONField

    if value is None:
        return r"\N"
    if isinstance(field, JSONField):
        return json.dumps(value).replace("\\", "\\\\")
    if isinstance(value, bool):
        return "t" if value else "f"
    if isinstance(value, float):
        return repr(value)
    return str(value)


def is_generated(n_parts: int, n_lots: int, n_units: int) -> bool:
    from labdb.catalog.models import Part
    from labdb.measurements.models import Fit
    from labdb.quality.models import LotSummary

    return (
        Part.objects.filter(part_number__startswith=PREFIX).count() == n_parts
        and LotSummary.objects.count() == n_parts * n_lots
        and Fit.objects.filter(sweep__isnull=False).count() == n_parts * n_lots * n_units
        # Generated before summaries kept their unit fits: generate again.
        and not LotSummary.objects.filter(unit_fits=[]).exists()
    )


def _junction(v, cjo, vj, m, cp):
    return cjo * (1.0 + v / vj) ** (-m) + cp


def generate(n_parts: int, n_lots: int, n_units: int, seed: int = 20261206) -> float:
    """Empty the catalogue tables and write the generated one; return seconds taken."""
    from django.db import connection, transaction

    from labdb.catalog.models import Lot, Part, Unit
    from labdb.measurements.models import Fit, Fixture, Sweep
    from labdb.quality.models import Flag, LotSummary

    t0 = time.perf_counter()
    rng = np.random.default_rng(seed)
    n_l, n_u = n_parts * n_lots, n_parts * n_lots * n_units

    # Part level: kind, rating, reference window, typical junction.
    kind = KINDS[rng.integers(0, KINDS.size, n_parts)]
    rated = np.where(kind == "led", 5.0, rng.choice([6.0, 12.0, 20.0, 30.0, 60.0], n_parts))
    ref_low = rng.choice([0.0, 0.5, 1.0], n_parts)
    ref_high = np.round(rated * rng.choice([0.5, 0.8, 1.0], n_parts), 1)
    p_cjo = np.exp(rng.uniform(np.log(2e-12), np.log(300e-12), n_parts))
    p_vj = rng.uniform(0.4, 2.5, n_parts)
    p_m = rng.uniform(0.3, 1.3, n_parts)
    p_cp = rng.uniform(0.0, 1.5e-12, n_parts)
    # Lot level: drift around the part, received dates, measured bias reach.
    part_of_lot = np.repeat(np.arange(n_parts), n_lots)
    l_cjo = p_cjo[part_of_lot] * np.exp(0.05 * rng.standard_normal(n_l))
    l_vj = p_vj[part_of_lot] * (1 + 0.03 * rng.standard_normal(n_l))
    l_m = p_m[part_of_lot] + 0.02 * rng.standard_normal(n_l)
    start = rng.integers(0, 900, n_parts)[part_of_lot]
    received = start + np.tile(np.arange(n_lots), n_parts) * 120 + rng.integers(0, 60, n_l)
    reach = rated[part_of_lot] * np.where(rng.random(n_l) < 0.8, 1.0, 0.5)
    # Unit level: spread within the lot.
    lot_of_unit = np.repeat(np.arange(n_l), n_units)
    u_cjo = l_cjo[lot_of_unit] * np.exp(0.03 * rng.standard_normal(n_u))
    u_vj = l_vj[lot_of_unit] * (1 + 0.02 * rng.standard_normal(n_u))
    u_m = np.clip(l_m[lot_of_unit] + 0.01 * rng.standard_normal(n_u), 0.1, None)
    u_cp = p_cp[part_of_lot][lot_of_unit]
    u_max = reach[lot_of_unit]

    with transaction.atomic(), connection.cursor() as c:
        tables = [Flag, LotSummary, Fit, Sweep, Unit, Lot, Part, Fixture]
        names = ", ".join(f'"{m._meta.db_table}"' for m in tables)
        c.execute(f"TRUNCATE {names} RESTART IDENTITY CASCADE")
        # Foreign keys are checked once per constraint after the load (one join each) rather
        # than row by row at commit: the difference is minutes at a million rows.
        c.execute(
            "SELECT conrelid::regclass::text, conname, pg_get_constraintdef(oid) "
            "FROM pg_constraint WHERE contype = 'f' AND conrelid::regclass::text = ANY(%s)",
            [[m._meta.db_table for m in tables]],
        )
        fks = c.fetchall()
        for table, name, _ in fks:
            c.execute(f'ALTER TABLE "{table}" DROP CONSTRAINT "{name}"')
        # Likewise the secondary indexes: one build after the load beats a million updates.
        c.execute(
            "SELECT indexname, indexdef FROM pg_indexes WHERE tablename = ANY(%s) AND "
            "indexname NOT IN (SELECT conname FROM pg_constraint WHERE contype IN ('p', 'u'))",
            [[m._meta.db_table for m in tables]],
        )
        indexes = c.fetchall()
        for name, _ in indexes:
            c.execute(f'DROP INDEX "{name}"')
        raw = c.cursor
        _Table(Fixture, ["id", "name", "kind"]).copy(
            raw, {"id": [1], "name": ["bench meter"], "kind": ["meter"]}
        )
        pids = list(range(1, n_parts + 1))
        _Table(
            Part,
            [
                "id",
                "part_number",
                "kind",
                "description",
                "rated_reverse_v",
                "ref_bias_low_v",
                "ref_bias_high_v",
            ],
        ).copy(
            raw,
            {
                "id": pids,
                "part_number": [f"{PREFIX}{i:05d}" for i in pids],
                "kind": kind.tolist(),
                "description": [" ".join(rng.choice(WORDS, 4)) for _ in pids],
                "rated_reverse_v": rated.tolist(),
                "ref_bias_low_v": ref_low.tolist(),
                "ref_bias_high_v": ref_high.tolist(),
            },
        )
        base = dt.date(2020, 1, 1)
        lids = list(range(1, n_l + 1))
        received_iso = [(base + dt.timedelta(days=int(d))).isoformat() for d in received]
        _Table(Lot, ["id", "part_id", "code", "received_on"]).copy(
            raw,
            {
                "id": lids,
                "part_id": (part_of_lot + 1).tolist(),
                "code": [f"L{(i - 1) % n_lots + 1:02d}" for i in lids],
                "received_on": received_iso,
            },
        )
        uids = list(range(1, n_u + 1))
        _Table(Unit, ["id", "lot_id", "label"]).copy(
            raw,
            {
                "id": uids,
                "lot_id": (lot_of_unit + 1).tolist(),
                "label": [f"U{(i - 1) % n_units + 1:02d}" for i in uids],
            },
        )
        zeros = [0.0] * n_u
        maxes = u_max.tolist()
        _Table(
            Sweep,
            [
                "id",
                "unit_id",
                "fixture_id",
                "kind",
                "raw_file",
                "raw_name",
                "raw_sha256",
                "raw_size",
                "points",
                "points_sha256",
                "n_points",
                "bias_min_v",
                "bias_max_v",
                "temperature_c",
                "illumination",
                "current_fit_id",
            ],
        ).copy(
            raw,
            {
                "id": uids,
                "unit_id": uids,
                "fixture_id": [1] * n_u,
                "kind": ["cv"] * n_u,
                "raw_file": [f"bench/{i}.csv" for i in uids],
                "raw_name": ["bench.csv"] * n_u,
                "raw_sha256": [f"{i:064x}" for i in uids],
                "raw_size": [100] * n_u,
                "points": [{"bias_v": [0.0, b]} for b in maxes],
                "points_sha256": [f"{i:064x}" for i in uids],
                "n_points": [41] * n_u,
                "bias_min_v": zeros,
                "bias_max_v": maxes,
                "temperature_c": [25.0] * n_u,
                "illumination": ["dark"] * n_u,
                "current_fit_id": uids,
            },
        )
        cjo, vj, m, cp = u_cjo.tolist(), u_vj.tolist(), u_m.tolist(), u_cp.tolist()
        _Table(
            Fit,
            [
                "id",
                "sweep_id",
                "version",
                "model",
                "params",
                "stderr",
                "correlation",
                "cjo",
                "vj",
                "m",
                "cp",
                "rms_rel",
                "n_points",
                "bias_min_v",
                "bias_max_v",
                "converged",
                "fitter_version",
                "input_sha256",
                "origin",
            ],
        ).copy(
            raw,
            {
                "id": uids,
                "sweep_id": uids,
                "version": [1] * n_u,
                "model": ["junction+cp"] * n_u,
                "params": [
                    {"cjo": a, "vj": b, "m": g, "cp": d}
                    for a, b, g, d in zip(cjo, vj, m, cp, strict=True)
                ],
                "stderr": [{}] * n_u,
                "correlation": [[]] * n_u,
                "cjo": cjo,
                "vj": vj,
                "m": m,
                "cp": cp,
                "rms_rel": [0.002] * n_u,
                "n_points": [41] * n_u,
                "bias_min_v": zeros,
                "bias_max_v": maxes,
                "converged": [True] * n_u,
                "fitter_version": ["bench"] * n_u,
                "input_sha256": [""] * n_u,
                "origin": ["command"] * n_u,
            },
        )
        _copy_summaries(
            raw,
            n_l,
            n_units,
            part_of_lot,
            ref_low,
            ref_high,
            u_cjo,
            u_vj,
            u_m,
            u_cp,
            reach,
            received_iso,
        )
        # Open flags on one part in twenty (a lot-level finding on its first lot).
        flagged = np.flatnonzero(rng.random(n_parts) < 0.05)
        _Table(Flag, ["id", "part_id", "lot_id", "rule", "summary"]).copy(
            raw,
            {
                "id": list(range(1, flagged.size + 1)),
                "part_id": (flagged + 1).tolist(),
                "lot_id": (flagged * n_lots + 1).tolist(),
                "rule": ["bench"] * flagged.size,
                "summary": ["generated open flag"] * flagged.size,
            },
        )
        for _, definition in indexes:
            c.execute(definition)
        for table, name, definition in fks:
            c.execute(f'ALTER TABLE "{table}" ADD CONSTRAINT "{name}" {definition}')
        for model in tables:
            t = model._meta.db_table
            c.execute(
                f"SELECT setval(pg_get_serial_sequence('\"{t}\"', 'id'), "
                f'GREATEST((SELECT MAX(id) FROM "{t}"), 1))'
            )
    with connection.cursor() as c:
        # Fresh statistics, and the visibility map that index-only scans rely on.
        c.execute("VACUUM ANALYZE")
    return time.perf_counter() - t0


def _copy_summaries(
    raw, n_l, n_units, part_of_lot, ref_low, ref_high, u_cjo, u_vj, u_m, u_cp, reach, received_iso
) -> None:
    from labdb.quality.models import LotSummary

    shape = (n_l, n_units)
    cjo, vj, m, cp = (a.reshape(shape) for a in (u_cjo, u_vj, u_m, u_cp))
    lo = ref_low[part_of_lot][:, None]
    hi = ref_high[part_of_lot][:, None]
    c_lo, c_hi = _junction(lo, cjo, vj, m, cp), _junction(hi, cjo, vj, m, cp)
    swing = c_lo / c_hi
    ids = list(range(1, n_l + 1))
    # The band JSON a real summary carries (41-point grid, 10/50/90 % curves): it makes the
    # rows as wide as the quality service's, which is what the ranking scan must cope with.
    grid = np.linspace(0.0, 1.0, 41)[None, :] * reach[:, None]
    p50 = _junction(grid, *(np.median(a, 1)[:, None] for a in (cjo, vj, m, cp)))
    bands = [
        {
            "bias_v": g.tolist(),
            "p10": (c * 0.98).tolist(),
            "p50": c.tolist(),
            "p90": (c * 1.02).tolist(),
        }
        for g, c in zip(grid, p50, strict=True)
    ]
    _Table(
        LotSummary,
        [
            "id",
            "lot_id",
            "part_id",
            "received_on",
            "illumination",
            "temperature_c",
            "n_units",
            "n_sweeps",
            "cjo_med",
            "vj_med",
            "m_med",
            "cp_med",
            "c_low_med_f",
            "c_high_med_f",
            "swing_med",
            "swing_min",
            "bias_min_v",
            "bias_max_v",
            "band",
            "newest_in_condition",
            "unit_fits",
        ],
    ).copy(
        raw,
        {
            "id": ids,
            "lot_id": ids,
            "part_id": (part_of_lot + 1).tolist(),
            "received_on": received_iso,
            "illumination": ["dark"] * n_l,
            "temperature_c": [25.0] * n_l,
            "n_units": [n_units] * n_l,
            "n_sweeps": [n_units] * n_l,
            "cjo_med": np.median(cjo, 1).tolist(),
            "vj_med": np.median(vj, 1).tolist(),
            "m_med": np.median(m, 1).tolist(),
            "cp_med": np.median(cp, 1).tolist(),
            "c_low_med_f": np.median(c_lo, 1).tolist(),
            "c_high_med_f": np.median(c_hi, 1).tolist(),
            "swing_med": np.median(swing, 1).tolist(),
            "swing_min": swing.min(1).tolist(),
            "bias_min_v": [0.0] * n_l,
            "bias_max_v": reach.tolist(),
            "band": bands,
            "newest_in_condition": _newest_marks(ids, part_of_lot, received_iso),
            "unit_fits": [
                [
                    [lot * n_units + k + 1, f"U{k + 1:02d}", *params]
                    for k, params in enumerate(zip(*rows, strict=True))
                ]
                for lot, rows in enumerate(
                    zip(cjo.tolist(), vj.tolist(), m.tolist(), cp.tolist(), strict=True)
                )
            ],
        },
    )


def _newest_marks(ids, part_of_lot, received_iso) -> list[bool]:
    """Each summary's newest-lot mark (one condition set), by the quality service's rule."""
    from labdb.quality.services.newest import newest_rows

    rows = zip(
        ids,
        part_of_lot.tolist(),
        ids,
        ["dark"] * len(ids),
        [25.0] * len(ids),
        [dt.date.fromisoformat(r) for r in received_iso],
        strict=True,
    )
    newest = newest_rows(rows)
    return [i in newest for i in ids]
