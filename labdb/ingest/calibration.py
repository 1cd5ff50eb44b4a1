"""Reader for oscillator-fixture calibration tables (reference capacitance and frequency).

The table has a reference-capacitance column (``C_ref (pF)``, ``reference [pF]``, or any
capacitance name; 0 means the open fixture) and a frequency column (``f (MHz)``). Other
columns are ignored with a note. Rows stay in file order; a reference may be read more
than once. The same header, unit and metadata rules as for sweeps apply.
"""

from __future__ import annotations

import numpy as np

from labdb.ingest.build import check_rows, file_metadata, header_problem, read_values
from labdb.ingest.columns import ROLE_ALIASES, Column, describe
from labdb.ingest.errors import IssueList, ParseError
from labdb.ingest.files import read_table
from labdb.ingest.metadata import squash_key
from labdb.ingest.sweep import ParsedCalibration

REFERENCE_ALIASES = set(ROLE_ALIASES["capacitance"]) | {
    "cref",
    "ref",
    "reference",
    "refc",
    "refcap",
    "creference",
    "referencecapacitance",
    "cstd",
    "standard",
    "cstandard",
    "ccal",
    "cal",
}
FREQUENCY_ALIASES = set(ROLE_ALIASES["frequency"])


def _pick(cols: list[Column], names: set[str], dim: str, role: str) -> list[Column]:
    found = [c for c in cols if c.name and squash_key(c.name) in names]
    if not found:  # a header that is only a unit, e.g. "pF" | "MHz"
        found = [c for c in cols if not c.name and c.unit is not None and c.unit.dim == dim]
    for c in found:
        c.role = role
    return found


def parse_calibration(data: bytes, filename: str) -> ParsedCalibration:
    """Parse a calibration table of an oscillator fixture.

    Parameters
    ----------
    data : bytes
        A delimited text file or .xlsx workbook.
    filename : str
        Name used to choose the reader and in messages.

    Returns
    -------
    ParsedCalibration
        ``ref_capacitance_f`` (F, ≥ 0) and ``freq_hz`` (Hz, > 0), shape (n,), file order.

    Raises
    ------
    ParseError
        Missing or doubled columns, bad numbers, fewer than two rows or fewer than two
        distinct references (a line through one point is not determined).
    """
    table = read_table(data, filename)
    problem = header_problem(table)
    if problem:
        raise problem
    if len(table.rows) < 2:
        raise ParseError.at(
            table.file, f"{len(table.rows)} data rows; a calibration needs at least two"
        )
    issues = IssueList(table.file)
    meta = file_metadata(table, issues)
    cols = describe(table, issues)
    refs = _pick(cols, REFERENCE_ALIASES, "F", "capacitance")
    freqs = _pick(cols, FREQUENCY_ALIASES, "Hz", "frequency")
    for found, what, example in (
        (refs, "reference capacitance", "C_ref (pF)"),
        (freqs, "frequency", "f (MHz)"),
    ):
        if len(found) != 1:
            names = ", ".join(f"'{c.header}'" for c in found) or "none"
            issues.add(
                f"need exactly one {what} column (e.g. '{example}'), found {names}",
                line=table.header_line,
            )
    for col in refs + freqs:
        if col.unit_text and col.unit is None:
            issues.add(f"unknown unit '{col.unit_text}'", line=table.header_line, column=col.header)
        elif col.unit is not None and col.unit.dim != col.dim:
            issues.add(
                f"unit '{col.unit.text}' does not fit a {col.role} column",
                line=table.header_line,
                column=col.header,
            )
    issues.raise_if_any()
    ref_col, freq_col = refs[0], freqs[0]
    skip = check_rows(table, [ref_col, freq_col], issues)
    ref = read_values(table, ref_col, issues, skip, "nonnegative")
    freq = read_values(table, freq_col, issues, skip, "positive")
    issues.raise_if_any()
    ref, freq = ref or [], freq or []  # read_values gives None only with issues raised above
    if len(set(ref)) < 2:
        raise ParseError.at(
            table.file,
            "all readings use the same reference; a calibration needs at least two different "
            "references (e.g. open and one known capacitor)",
            column=ref_col.header,
        )
    return ParsedCalibration(
        ref_capacitance_f=np.asarray(ref, dtype=float),
        freq_hz=np.asarray(freq, dtype=float),
        metadata=meta,
        source=table.source,
        columns={"reference": ref_col.header, "frequency": freq_col.header},
        lines=[line for line, _ in table.rows if line not in skip],
    )
