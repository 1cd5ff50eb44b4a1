"""Turn a raw table into checked sweeps: numbers, units, plausibility, metadata."""

from __future__ import annotations

import math
from datetime import date, datetime

from labdb.ingest.columns import EXTRA_KEYS, Column, plan_columns
from labdb.ingest.errors import IssueList, ParseError
from labdb.ingest.metadata import field_for, normalize_metadata
from labdb.ingest.sweep import ParsedSweep, make_sweep, plan_bias, too_few
from labdb.ingest.table import RawTable
from labdb.ingest.units import BASE, DIMENSION_NAMES, parse_number, parse_unit

# For a column written without a unit, SI is assumed; these bounds catch the usual slip
# (pF written as plain numbers). Each entry: dimension -> (test on the largest |value|,
# what it would be, the unit to suggest).
_IMPLAUSIBLE = {
    "F": (lambda top: top > 1e-3, "far too large for a junction", "pF"),
    "Hz": (lambda top: top < 1e3, "too low for a test oscillator", "MHz"),
    "V": (lambda top: top > 1e3, "far too high for a bias sweep", "mV"),
    "S": (lambda top: top > 1.0, "far too large", "uS"),
}


def cell_text(cell: object) -> str:
    """A cell as the user would see it (for messages)."""
    if cell is None:
        return ""
    if isinstance(cell, float) and cell.is_integer() and abs(cell) < 1e15:
        return str(int(cell))
    return str(cell).strip()


def _separator_hint(text: str, table: RawTable) -> str:
    """A hint when a cell holds another separator than the header uses."""
    for sep, name in ((";", "semicolons"), ("\t", "tabs"), ("|", "bars")):
        if sep in text and table.separator != name:
            return f" (the cell holds {name} but the header is split by {table.separator})"
    return ""


def check_rows(table: RawTable, used: list[Column], issues: IssueList) -> set[int]:
    """Report rows with too few or too many cells; return their lines (skipped later)."""
    bad: set[int] = set()
    width = len(table.header)
    need = max(c.index for c in used) + 1
    for line, cells in table.rows:
        filled = len(cells)
        while filled > width and cell_text(cells[filled - 1]) == "":
            filled -= 1
        if filled > width or len(cells) < need:
            n = len([c for c in cells if cell_text(c) != ""])
            issues.add(
                f"row has {n} values but the header names {width} columns "
                f"(cells separated by {table.separator}); is the row cut short or split "
                "by another separator?",
                line=line,
            )
            bad.add(line)
    return bad


def read_values(
    table: RawTable,
    col: Column,
    issues: IssueList,
    skip: set[int],
    minimum: str | None = None,
) -> list[float] | None:
    """SI values of one column, reporting every bad cell; None if any cell was bad.

    ``minimum`` is ``"positive"`` or ``"nonnegative"`` for readings that cannot be below.
    """
    before = issues.count()
    unit = col.unit  # header unit, or the first unit written in a cell
    unit_written = col.unit is not None
    out: list[float] = []
    top, top_line, top_text = -1.0, 0, ""
    for line, cells in table.rows:
        if line in skip:
            continue
        cell = cells[col.index] if col.index < len(cells) else None
        text = cell_text(cell)
        if isinstance(cell, bool) or isinstance(cell, (datetime, date)):
            issues.add(f"'{text}' is not a number", line=line, column=col.header)
            continue
        if isinstance(cell, (int, float)):
            value, cell_unit = float(cell), None
            if not math.isfinite(value):
                issues.add(f"'{text}' is not a finite number", line=line, column=col.header)
                continue
        else:
            try:
                value, cell_unit = parse_number(text, table.decimal_comma)
            except ValueError as exc:
                issues.add(str(exc) + _separator_hint(text, table), line=line, column=col.header)
                continue
        if cell_unit is not None:
            if cell_unit.dim != col.dim:
                issues.add(
                    f"'{text}' is a {DIMENSION_NAMES[cell_unit.dim]}, not a "
                    f"{DIMENSION_NAMES[col.dim or '1']}",
                    line=line,
                    column=col.header,
                )
                continue
            if unit is None and not out:
                unit, unit_written = cell_unit, True
            if unit is None or not cell_unit.same_as(unit):
                was = f"in '{unit.text}'" if unit is not None else "without a unit"
                issues.add(
                    f"mixed units: '{text}' is in {cell_unit.text} but the column is {was}",
                    line=line,
                    column=col.header,
                )
                continue
        elif unit is not None and unit_written and col.unit is None:
            issues.add(
                f"mixed units: '{text}' has no unit but earlier cells are in {unit.text}",
                line=line,
                column=col.header,
            )
            continue
        si = value * (unit.scale if unit is not None else 1.0)
        if not math.isfinite(si):
            issues.add(
                f"'{text}' is too large once converted to {BASE[col.dim or '1']}",
                line=line,
                column=col.header,
            )
            continue
        if (minimum == "positive" and not si > 0) or (minimum == "nonnegative" and si < 0):
            issues.add(
                f"'{text}' is not a {minimum} {DIMENSION_NAMES[col.dim or '1']}",
                line=line,
                column=col.header,
            )
            continue
        if abs(si) > top:
            top, top_line, top_text = abs(si), line, text
        out.append(si)
    if issues.count() > before:
        return None
    if not unit_written and out and col.dim in _IMPLAUSIBLE:
        test, why, suggest = _IMPLAUSIBLE[col.dim]
        if test(top):
            issues.add(
                f"'{top_text}' would be {top:g} {BASE[col.dim]}, {why}; did you mean "
                f"{suggest}? write the unit in the header, e.g. "
                f"'{col.name or col.header} ({suggest})'",
                line=top_line,
                column=col.header,
            )
            return None
    return out


def file_metadata(table: RawTable, issues: IssueList) -> dict:
    """Normalised metadata of a table, with its issues recorded."""
    meta, meta_issues = normalize_metadata(
        table.meta, table.file, table.meta_lines, table.decimal_comma
    )
    issues.extend(meta_issues)
    label = meta.get("unit")
    if label and parse_unit(label) is not None:
        key = next((k for k in table.meta if k.strip().lower() == "unit"), "unit")
        issues.add(
            f"metadata 'unit' is the label of the device, but '{label}' is a measurement "
            "unit; write '# unit of readings: " + label + "' or put the unit in the headers",
            line=table.meta_lines.get(key),
        )
    return meta


def header_problem(table: RawTable) -> ParseError | None:
    """Errors about the header row as a whole (missing, one column, numbers)."""
    if not table.header:
        return ParseError.at(table.file, "no header row naming the columns was found")
    texts = [cell_text(h) for h in table.header]
    if len(texts) == 1:
        return ParseError.at(
            table.file,
            f"only one column found ('{texts[0]}'); columns must be separated by commas, "
            "semicolons, tabs or spaces" + (" (not '|')" if "|" in texts[0] else ""),
            line=table.header_line,
        )
    numeric = 0
    for t in texts:
        try:
            parse_number(t, table.decimal_comma)
            numeric += 1
        except ValueError:
            pass
    if numeric == len(texts):
        return ParseError.at(
            table.file,
            "the first row holds numbers; the file needs a header row naming the columns "
            "with their units, e.g. 'V_R (V), C (pF)'",
            line=table.header_line,
        )
    return None


def table_to_sweeps(table: RawTable) -> list[ParsedSweep]:
    """Check a raw table and turn it into one sweep (or one per unit of a wide file)."""
    problem = header_problem(table) or too_few(len(table.rows), table.file)
    if problem:
        raise problem
    issues = IssueList(table.file)
    meta = file_metadata(table, issues)
    plan = plan_columns(table, issues)
    if plan is None:
        issues.raise_if_any()
        return []  # unreachable: plan_columns records why it failed
    used = [plan.bias, *plan.readings, *plan.extras]
    skip = check_rows(table, used, issues)
    lines = [line for line, _ in table.rows if line not in skip]
    bias = read_values(table, plan.bias, issues, skip)
    readings = {c.header: read_values(table, c, issues, skip, "positive") for c in plan.readings}
    extras = {EXTRA_KEYS[c.role]: read_values(table, c, issues, skip) for c in plan.extras}
    if meta.get("kind") not in (None, plan.kind):
        key = next((k for k in table.meta if field_for(k) == "kind"), "kind")
        issues.add(
            f"metadata says kind '{meta['kind']}' but the columns hold a "
            f"{'capacitance' if plan.kind == 'cv' else 'frequency'} sweep",
            line=table.meta_lines.get(key),
        )
    issues.raise_if_any()
    error = too_few(len(lines), table.file, "readable data rows")
    if error:
        raise error
    bplan = plan_bias(bias or [], lines, issues, plan.bias.header)
    issues.raise_if_any()
    meta["kind"] = plan.kind
    plan.notes.extend(_zone_note(table))
    sweeps = []
    for col in plan.readings:
        sweep_meta = dict(meta)
        note = []
        if plan.wide:
            if meta.get("unit") and meta["unit"] != col.name:
                note.append(f"metadata unit '{meta['unit']}' replaced by the column label")
            sweep_meta["unit"] = col.name or col.header
        sweep = make_sweep(
            table.source, plan.kind, bplan, readings[col.header] or [], extras, lines, sweep_meta
        )
        sweep.unit_label = (col.name or col.header) if plan.wide else None
        sweep.columns = {"bias": plan.bias.header}
        sweep.columns["capacitance" if plan.kind == "cv" else "frequency"] = col.header
        sweep.columns.update({c.role: c.header for c in plan.extras})
        sweep.notes.extend(plan.notes + note)
        sweeps.append(sweep)
    return sweeps


def _zone_note(table: RawTable) -> list[str]:
    """A note when the measurement time was written without a time zone (UTC assumed)."""
    for key, value in table.meta.items():
        if field_for(key) != "measured_at":
            continue
        try:
            naive = datetime.fromisoformat(value.strip()).tzinfo is None
        except ValueError:
            return []
        if naive:
            return [f"'{key}' has no time zone; taken as UTC"]
    return []
