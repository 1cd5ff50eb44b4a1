"""Column roles: which header is the bias, the reading, an extra, or a wide-file unit.

A column's role comes from its name (see :data:`ROLE_ALIASES`; case, spaces, underscores
and hyphens do not matter) and, failing that, from its unit.

Wide files hold one bias column and one reading column per unit, each reading column
named by the unit label. A column whose name is not a known role is a reading column when
its header carries a capacitance or frequency unit (``U01 (pF)``), or when the metadata
says what the readings are: ``# unit of readings: pF`` and/or ``# quantity: capacitance``
(or ``frequency``). A file is wide only when it has no column named as a capacitance or
frequency; each reading column then becomes its own sweep with ``unit_label`` set to
the column name.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from labdb.ingest.errors import IssueList
from labdb.ingest.metadata import squash_key
from labdb.ingest.table import RawTable
from labdb.ingest.units import DIMENSION_NAMES, Unit, base_unit, parse_unit, split_header

ROLE_ALIASES = {
    "bias": (
        "v", "vr", "vbias", "bias", "voltage", "reversebias", "reversevoltage", "vd", "vdc",
        "vrev", "vreverse", "biasvoltage", "dcbias", "vb", "ubias",
    ),
    "capacitance": (
        "c", "cap", "capacitance", "cj", "cp", "cs", "cd", "ctot", "cjunction", "cpar",
        "cser", "cmeas", "cmeasured",
    ),
    "frequency": (
        "f", "freq", "frequency", "fosc", "fout", "oscfreq", "oscfrequency",
        "oscillatorfrequency", "fmeas", "fmeasured",
    ),
    "conductance": ("g", "gp", "conductance", "gpar"),
    "q": ("q", "qfactor", "quality", "qualityfactor"),
    "d": ("d", "df", "dissipation", "dissipationfactor", "tand", "tandelta", "lossfactor"),
    "esr": ("esr", "rs", "rser", "seriesresistance"),
}  # fmt: skip
ROLE_DIM = {
    "bias": "V",
    "capacitance": "F",
    "frequency": "Hz",
    "conductance": "S",
    "q": "1",
    "d": "1",
    "esr": "ohm",
}
EXTRA_KEYS = {"conductance": "conductance_s", "q": "q", "d": "d", "esr": "esr_ohm"}
#: names of counter or bookkeeping columns, skipped without comment
SKIPPED_NAMES = {"n", "no", "nr", "#", "", "index", "idx", "point", "pt", "step", "i", "row"}
_ROLE_OF = {alias: role for role, aliases in ROLE_ALIASES.items() for alias in aliases}
_DIM_ROLE = {"V": "bias", "F": "capacitance", "Hz": "frequency", "S": "conductance"}
_QUANTITY_DIM = {
    "capacitance": "F",
    "c": "F",
    "cv": "F",
    "frequency": "Hz",
    "f": "Hz",
    "freq": "Hz",
    "fv": "Hz",
}


@dataclass
class Column:
    """One column of the table and what it means."""

    index: int
    header: str
    name: str
    unit: Unit | None  # None: no unit written; SI assumed and checked for plausibility
    role: str | None = None  # bias, capacitance, frequency, conductance, q, d, esr, reading
    unit_text: str | None = None
    reading_dim: str | None = None  # wide readings: "F" or "Hz"

    @property
    def dim(self) -> str | None:
        """Dimension from the role (wide readings carry their own)."""
        if self.role == "reading":
            return self.reading_dim
        return ROLE_DIM.get(self.role) if self.role else None

    def si_unit(self) -> Unit:
        """The unit values are scaled by (the SI base unit if none was written)."""
        return self.unit if self.unit is not None else base_unit(self.dim or "1")


@dataclass
class Plan:
    """How a table maps to sweeps."""

    kind: str  # "cv" or "fv"
    bias: Column
    readings: list[Column]  # one column (narrow) or one per unit (wide)
    wide: bool
    extras: list[Column] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)


def role_of_name(name: str) -> str | None:
    """The role a bare column name stands for, or None."""
    return _ROLE_OF.get(squash_key(name))


def describe(table: RawTable, issues: IssueList) -> list[Column]:
    """Split every header into name and unit; report empty, duplicate or unknown units."""
    cols: list[Column] = []
    seen: dict[str, int] = {}
    units_row = table.units_row or []
    for i, header in enumerate(table.header):
        text = str(header).strip()
        if not text:
            issues.add(f"column {i + 1} has no name", line=table.header_line)
        elif text.casefold() in seen:
            issues.add(
                f"column name appears twice (columns {seen[text.casefold()] + 1} and {i + 1})",
                line=table.header_line,
                column=text,
            )
        seen.setdefault(text.casefold(), i)
        name, unit_text = split_header(text)
        row_unit = units_row[i].strip() if i < len(units_row) else ""
        if row_unit:
            written, below = parse_unit(unit_text or ""), parse_unit(row_unit)
            if written is not None and below is not None and not written.same_as(below):
                issues.add(
                    f"the header says '{unit_text}' but the units row says '{row_unit}'",
                    line=table.header_line + 1,
                    column=text,
                )
            unit_text = unit_text or row_unit
        unit = parse_unit(unit_text) if unit_text else None
        cols.append(Column(i, text, name, unit, unit_text=unit_text))
    return cols


def _reading_unit(table: RawTable, issues: IssueList) -> Unit | None:
    """The unit the metadata gives for wide-file readings (None if it gives none)."""
    d = table.directives
    unit = None
    if "reading_unit" in d:
        unit = parse_unit(d["reading_unit"])
        if unit is None or unit.dim not in ("F", "Hz"):
            issues.add(
                f"metadata unit of readings '{d['reading_unit']}' is not a capacitance or "
                "frequency unit (e.g. pF, MHz)",
                line=table.meta_lines.get("reading_unit"),
            )
            return None
    if "quantity" in d:
        dim = _QUANTITY_DIM.get(squash_key(d["quantity"]))
        if dim is None:
            issues.add(
                f"metadata quantity '{d['quantity']}' is not capacitance or frequency",
                line=table.meta_lines.get("quantity"),
            )
            return None
        if unit is not None and unit.dim != dim:
            issues.add(
                f"metadata quantity '{d['quantity']}' does not match the unit of readings "
                f"'{d['reading_unit']}'",
                line=table.meta_lines.get("quantity"),
            )
            return None
        unit = unit or Unit("", dim, 1.0)
    return unit


def _assign_roles(cols: list[Column], table: RawTable, issues: IssueList) -> None:
    for col in cols:
        role = role_of_name(col.name) if col.name else None
        if role is None and not col.name and col.unit is not None:
            role = _DIM_ROLE.get(col.unit.dim)
        if role is None:
            continue
        if col.unit_text and col.unit is None:
            issues.add(
                f"unknown unit '{col.unit_text}' (write e.g. V, pF, nF, MHz, uS, ohm)",
                line=table.header_line,
                column=col.header,
            )
        elif col.unit is not None and col.unit.dim != ROLE_DIM[role]:
            issues.add(
                f"looks like {role} but its unit '{col.unit.text}' is a "
                f"{DIMENSION_NAMES[col.unit.dim]} unit",
                line=table.header_line,
                column=col.header,
            )
        col.role = role


def _one(cols: list[Column], role: str, table: RawTable, issues: IssueList) -> Column | None:
    found = [c for c in cols if c.role == role]
    if len(found) > 1:
        names = ", ".join(f"'{c.header}'" for c in found)
        issues.add(f"more than one {role} column ({names}); keep one", line=table.header_line)
    return found[0] if found else None


def plan_columns(table: RawTable, issues: IssueList) -> Plan | None:
    """Decide bias, reading and extra columns; None (with issues) when that is impossible."""
    before = issues.count()
    cols = describe(table, issues)
    _assign_roles(cols, table, issues)
    free = [c for c in cols if c.role is None and squash_key(c.name) not in SKIPPED_NAMES]
    bias = _one(cols, "bias", table, issues)
    if bias is None:
        volts = [c for c in free if c.unit is not None and c.unit.dim == "V"]
        if len(volts) == 1:
            bias = volts[0]
            bias.role = "bias"
            free.remove(bias)
    if bias is None:
        names = ", ".join(f"'{c.header}'" for c in cols)
        issues.add(
            f"no bias column found among {names}; name it e.g. 'V_R (V)' or 'bias (V)'",
            line=table.header_line,
        )
    cap = _one(cols, "capacitance", table, issues)
    freq = _one(cols, "frequency", table, issues)
    if cap is not None and freq is not None:
        issues.add(
            f"both a capacitance ('{cap.header}') and a frequency ('{freq.header}') column; "
            "a sweep file holds one of them",
            line=table.header_line,
        )
    extras = [c for c in cols if c.role in EXTRA_KEYS]
    for role in EXTRA_KEYS:
        _one(cols, role, table, issues)
    notes: list[str] = []
    reading = cap or freq
    if reading is not None:
        readings, wide = [reading], False
    else:
        readings, wide = _wide_readings(free, table, issues), True
        for col in extras:
            notes.append(f"column '{col.header}' is not used in a wide file")
        extras = []
    for col in free:
        if col not in readings:
            notes.append(f"column '{col.header}' is not used")
    if issues.count() > before or bias is None or not readings:
        return None
    kind = "cv" if readings[0].dim == "F" else "fv"
    return Plan(kind, bias, readings, wide, extras, notes)


def _wide_readings(free: list[Column], table: RawTable, issues: IssueList) -> list[Column]:
    given = _reading_unit(table, issues)
    readings: list[Column] = []
    for col in free:
        if col.unit_text and col.unit is None:
            continue  # a bracketed note that is not a unit: not a reading
        unit = col.unit if col.unit is not None else given
        if unit is None or unit.dim not in ("F", "Hz"):
            continue
        if given is not None and unit.dim != given.dim:
            issues.add(
                f"unit '{unit.text}' does not match the readings named in the metadata",
                line=table.header_line,
                column=col.header,
            )
        col.role = "reading"
        col.reading_dim = unit.dim
        # a quantity given without a unit leaves the column unit-less: SI is assumed and
        # the values are checked for plausibility like any column without a unit
        col.unit = unit if unit.text else None
        readings.append(col)
    labels = [squash_key(c.name or c.header) for c in readings]
    for col, label in zip(readings, labels, strict=True):
        if labels.count(label) > 1:
            issues.add(
                "two unit columns carry the same label", line=table.header_line, column=col.header
            )
    dims = {c.dim for c in readings}
    if len(dims) > 1:
        issues.add(
            "the unit columns mix capacitance and frequency readings", line=table.header_line
        )
    if not readings:
        names = ", ".join(f"'{c.header}'" for c in free) or "none"
        issues.add(
            "no capacitance or frequency column found (other columns: "
            f"{names}); name it e.g. 'C (pF)' or 'f (MHz)'; in a file with one column per "
            "unit write the unit in each header, e.g. 'U01 (pF)', or add a line "
            "'# unit of readings: pF'",
            line=table.header_line,
        )
    return readings
