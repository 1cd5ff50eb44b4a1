"""Impedance sweeps (impedance against test frequency at one bias) from text tables and .s1p files.

A delimited text impedance sweep has a frequency column and one pair that fixes the
complex impedance, units in the headers as for C–V files (uploads send workbooks to the
C–V reader; :func:`parse_impedance_file` itself also reads one):

* ``|Z|`` and phase (degrees unless the header says ``rad``),
* ``R`` (or ``Rs``, ``ESR``) and ``X``,
* ``Cs`` with ``Rs``, ``D`` or ``Q`` (series equivalent),
* ``Cp`` with ``G``, ``Rp``, ``D`` or ``Q`` (parallel equivalent).

A plain ``C`` is taken as series beside ``Rs`` and as parallel beside ``G`` or ``Rp``; beside
``D`` or ``Q`` alone it is refused, since the loss then means different things. Touchstone
one-port files are read by :mod:`labdb.ingest.touchstone`, S11 turned into Z = Z0(1+S11)/(1−S11).

The bias of the sweep comes from a ``bias`` metadata line (``# bias: 2 V`` in text files,
``! bias: 2 V`` in Touchstone files) and may be given by the caller instead. Reverse bias is
positive; a small forward bias (down to −1 V) is kept as negative, below that refused.
Frequencies must rise (a falling sweep is turned round with a note); a repeat or a change
of direction is refused at its line.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from labdb.ingest.build import check_rows, header_problem, read_values
from labdb.ingest.columns import Column, describe, role_of_name
from labdb.ingest.delimited import read_delimited
from labdb.ingest.errors import IssueList, ParseError
from labdb.ingest.files import ARCHIVE_EXTENSIONS, WORKBOOK_EXTENSIONS, extension, read_table
from labdb.ingest.metadata import normalize_metadata, squash_key
from labdb.ingest.sweep import FORWARD_LIMIT_V, too_few
from labdb.ingest.table import RawTable
from labdb.ingest.touchstone import port_count, read_touchstone
from labdb.ingest.units import parse_quantity, split_header
from labdb.physics.errors import PhysicsInputError
from labdb.physics.impedance import s11_to_z

#: Bytes of a text file read to tell an impedance table from a bias sweep (its header).
SNIFF_BYTES = 16 * 1024
#: ``# kind:`` values that mark an impedance sweep.
KIND_WORDS = {"zf", "z", "impedance", "impedancesweep", "zsweep"}
#: Metadata keys that give the bias of an impedance sweep (squashed).
BIAS_KEYS = {
    "bias", "biasv", "vbias", "reversebias", "dcbias", "vr", "vdc", "biasvoltage",
    "reversevoltage", "vreverse", "ubias", "vb",
}  # fmt: skip
ROLE_NAMES = {
    "frequency": ("f", "freq", "frequency", "ftest", "testfrequency", "testfreq", "fhz"),
    "zmag": ("z", "|z|", "absz", "zabs", "zmag", "magz", "modz", "impedance", "zmagnitude"),
    "phase": (
        "phase", "theta", "θ", "θz", "phi", "φ", "angle", "phasez", "zphase", "argz", "arg(z)",
        "phaseangle", "zangle", "anglez",
    ),
    "r": ("r", "rs", "esr", "rser", "resistance", "seriesresistance", "re(z)", "rez", "zreal", "realz"),
    "x": ("x", "xs", "reactance", "seriesreactance", "im(z)", "imz", "zimag", "imagz"),
    "cs": ("cs", "cser", "cseries", "seriescapacitance"),
    "cp": ("cp", "cpar", "cparallel", "parallelcapacitance"),
    "c": ("c", "cap", "capacitance"),
    "d": ("d", "df", "dissipation", "dissipationfactor", "tand", "tandelta", "lossfactor"),
    "q": ("q", "qfactor", "quality", "qualityfactor"),
    "g": ("g", "gp", "conductance", "gpar"),
    "rp": ("rp", "rpar", "parallelresistance"),
}  # fmt: skip
ROLE_DIMS = {
    "frequency": "Hz", "zmag": "ohm", "phase": "1", "r": "ohm", "x": "ohm", "cs": "F",
    "cp": "F", "c": "F", "d": "1", "q": "1", "g": "S", "rp": "ohm",
}  # fmt: skip
_ROLE_OF = {alias: role for role, names in ROLE_NAMES.items() for alias in names}
_ANGLE_UNITS = {"deg": 1.0, "°": 1.0, "degree": 1.0, "degrees": 1.0, "rad": 180 / math.pi}
_ANGLE_UNITS |= {"radian": 180 / math.pi, "radians": 180 / math.pi}


@dataclass
class ParsedImpedance:
    """One impedance sweep read from a file.

    Attributes
    ----------
    source : str
        File or member name.
    frequency_hz : ndarray, shape (n,)
        Test frequency [Hz], strictly increasing.
    z_ohm : ndarray of complex, shape (n,)
        Impedance [ohm] of the unit at each frequency.
    bias_v : float or None
        Reverse bias [V] from the file's metadata (None when the file does not say).
    metadata : dict
        Normalised metadata (see :mod:`labdb.ingest.metadata`); ``kind`` is ``"zf"``.
    notes : list of str
        What was assumed or changed on the way.
    layout : str
        How the impedance was given, e.g. ``"Touchstone S11 (MA)"``, ``"Cs and Rs"``.
    z0_ohm : float or None
        Touchstone reference impedance [ohm].
    columns : dict of str to str
        Role to header as written (text tables).
    lines : list of int
        Original line of each point, in frequency order.
    """

    source: str
    frequency_hz: np.ndarray
    z_ohm: np.ndarray
    bias_v: float | None
    metadata: dict[str, Any]
    notes: list[str] = field(default_factory=list)
    layout: str = ""
    z0_ohm: float | None = None
    columns: dict[str, str] = field(default_factory=dict)
    lines: list[int] = field(default_factory=list)
    kind: str = "zf"
    unit_label: str | None = None


def _impedance_role(name: str) -> str | None:
    return _ROLE_OF.get(squash_key(name))


def is_impedance_file(data: bytes, filename: str) -> bool:
    """True when the file is an impedance sweep rather than a bias sweep.

    Touchstone names (``.s1p``, ``.s2p`` ...) always are; archives and workbooks never; a
    text table is when its metadata says ``kind: zf`` (or ``impedance``), or when it has a
    frequency column, no bias column and some impedance quantity (|Z|, phase, R, X, Cs,
    Cp ...). Only the first :data:`SNIFF_BYTES` are looked at, so every upload pays little.
    """
    if port_count(filename) is not None:
        return True
    ext = extension(filename)
    if ext in ARCHIVE_EXTENSIONS or ext in WORKBOOK_EXTENSIONS or ext == ".zip":
        return False
    if not isinstance(data, bytes | bytearray | memoryview) or bytes(data[:4]) == b"PK\x03\x04":
        return False
    try:
        table = read_delimited(bytes(data[:SNIFF_BYTES]), filename)
    except ParseError:
        return False
    if any(_kind_word(k, v) for k, v in table.meta.items()):
        return True
    names = [str(h).strip() for h in table.header]
    roles = {_impedance_role(describe_name(n)) for n in names}
    has_bias = any(role_of_name(describe_name(n)) == "bias" for n in names)
    return "frequency" in roles and not has_bias and bool(roles - {"frequency", None})


def describe_name(header: str) -> str:
    """A header's name without its unit (``|Z| (ohm)`` → ``|Z|``)."""
    return split_header(header)[0]


def _kind_word(key: str, value: str) -> bool:
    return squash_key(key) in ("kind", "sweepkind", "sweeptype") and (
        squash_key(str(value)).replace("–", "") in KIND_WORDS
    )


def parse_impedance_file(data: bytes, filename: str) -> ParsedImpedance:
    """Parse one impedance sweep file (Touchstone one-port or a delimited/workbook table).

    Parameters
    ----------
    data : bytes
        The file as uploaded.
    filename : str
        Name: ``.s1p`` is read as Touchstone, anything else as a table.

    Returns
    -------
    ParsedImpedance

    Raises
    ------
    ParseError
        Every problem found, with file, line and column or option item.
    """
    if port_count(filename) is not None:
        return _from_touchstone(data, filename)
    return _from_table(read_table(data, filename))


def _metadata(raw: dict, lines: dict, file: str, issues: IssueList, decimal_comma=False):
    """Normalised metadata and the bias [V] (or None) from raw ``key: value`` pairs."""
    kept = {k: v for k, v in raw.items() if not _kind_word(k, v)}
    meta, found = normalize_metadata(kept, file, lines, decimal_comma)
    issues.extend(found)
    if meta.get("kind") is not None:
        key = next(k for k in kept if squash_key(k) in ("kind", "sweepkind", "sweeptype"))
        issues.add(
            f"metadata says kind '{meta['kind']}' but the file holds an impedance sweep "
            "(write 'kind: zf' or leave it out)",
            line=lines.get(key),
        )
    meta["kind"] = "zf"
    bias, notes = None, []
    for key in [k for k in kept if squash_key(k) in BIAS_KEYS]:
        meta["other"].pop(key.strip(), None)
        if bias is not None:
            issues.add(f"a second bias line '{key}'", line=lines.get(key))
            continue
        try:
            bias = parse_quantity(kept[key], "V", decimal_comma)
        except ValueError as exc:
            issues.add(f"metadata '{key.strip()}': {exc}", line=lines.get(key))
            continue
        if bias < -FORWARD_LIMIT_V:
            issues.add(
                f"bias {bias:g} V: reverse bias is written positive; a forward bias beyond "
                f"-{FORWARD_LIMIT_V:g} V is not a varactor measurement",
                line=lines.get(key),
            )
        elif bias < 0:
            notes.append(f"bias {bias:g} V is kept as a forward bias (reverse bias is positive)")
    return meta, bias, notes


def _from_touchstone(data: bytes, filename: str) -> ParsedImpedance:
    ts = read_touchstone(data, filename)
    issues = IssueList(filename)
    meta, bias, notes = _metadata(ts.meta, ts.meta_lines, filename, issues)
    issues.raise_if_any()
    error = too_few(len(ts.frequency_hz), filename, "frequency points")
    if error:
        raise error
    try:
        z = s11_to_z(ts.s11, ts.z0_ohm)
    except PhysicsInputError:
        at = int(np.flatnonzero(ts.s11 == 1)[0])
        raise ParseError.at(
            filename, "S11 = 1 (an ideal open) has no finite impedance", line=ts.lines[at]
        ) from None
    over = np.flatnonzero(np.abs(ts.s11) > 1.0)
    if over.size:
        worst = over[np.argmax(np.abs(ts.s11[over]))]
        notes.append(
            f"{over.size} points have |S11| > 1 (largest {abs(ts.s11[worst]):.4g} on line "
            f"{ts.lines[worst]}): negative resistance, usually calibration error; kept"
        )
    return ParsedImpedance(
        source=filename,
        frequency_hz=ts.frequency_hz,
        z_ohm=z,
        bias_v=bias,
        metadata=meta,
        notes=ts.notes + notes,
        layout=f"Touchstone S11 ({ts.format}, R {ts.z0_ohm:g} ohm)",
        z0_ohm=ts.z0_ohm,
        lines=list(ts.lines),
    )


def _assign(table: RawTable, issues: IssueList) -> dict[str, Column]:
    """Impedance role of each column (checked units); the columns by role."""
    found: dict[str, Column] = {}
    for col in describe(table, issues):
        role = _impedance_role(col.name)
        if role is None:
            continue
        if role in found:
            issues.add(
                f"more than one {role} column ('{found[role].header}' and '{col.header}')",
                line=table.header_line,
            )
            continue
        dim = ROLE_DIMS[role]
        if role == "phase":
            if col.unit_text and col.unit_text.strip().lower() not in _ANGLE_UNITS:
                issues.add(
                    f"phase unit '{col.unit_text}' is not deg or rad",
                    line=table.header_line,
                    column=col.header,
                )
            col.unit = None
        elif col.unit_text and col.unit is None:
            issues.add(
                f"unknown unit '{col.unit_text}' (write e.g. Hz, MHz, ohm, pF, uS)",
                line=table.header_line,
                column=col.header,
            )
        elif col.unit is not None and col.unit.dim != dim:
            issues.add(
                f"looks like {role} but its unit '{col.unit.text}' is not a {dim} unit",
                line=table.header_line,
                column=col.header,
            )
        col.role, col.reading_dim = "reading", dim
        found[role] = col
    return found


_PAIRS = (
    ("polar", ("zmag", "phase")),
    ("rect", ("r", "x")),
    ("series", ("cs", "r")),
    ("series", ("cs", "d")),
    ("series", ("cs", "q")),
    ("series", ("c", "r")),
    ("parallel", ("cp", "g")),
    ("parallel", ("cp", "rp")),
    ("parallel", ("cp", "d")),
    ("parallel", ("cp", "q")),
    ("parallel", ("c", "g")),
    ("parallel", ("c", "rp")),
)
_LAYOUT = {"zmag": "|Z|", "phase": "phase", "r": "R", "x": "X", "cs": "Cs", "cp": "Cp"}
_LAYOUT |= {"c": "C", "d": "D", "q": "Q", "g": "G", "rp": "Rp"}


def _choose_pair(found: dict[str, Column], table: RawTable, issues: IssueList):
    for form, roles in _PAIRS:
        if all(r in found for r in roles):
            return form, roles
    if "c" in found and ("d" in found or "q" in found):
        issues.add(
            f"'{found['c'].header}' with a D or Q column: name the capacitance 'Cs' (series) "
            "or 'Cp' (parallel), since the loss means different things in each",
            line=table.header_line,
        )
        return None
    names = ", ".join(f"'{h}'" for h in table.header)
    issues.add(
        f"no impedance pair among {names}; give |Z| and phase, R and X, Cs with Rs, D or Q, "
        "or Cp with G, Rp, D or Q, each with its unit",
        line=table.header_line,
    )
    return None


def _from_table(table: RawTable) -> ParsedImpedance:
    problem = header_problem(table) or too_few(len(table.rows), table.file)
    if problem:
        raise problem
    issues = IssueList(table.file)
    meta, bias, notes = _metadata(
        table.meta, table.meta_lines, table.file, issues, table.decimal_comma
    )
    found = _assign(table, issues)
    freq_col = found.get("frequency")
    if freq_col is None:
        issues.add("no frequency column; name it e.g. 'f (Hz)'", line=table.header_line)
    pair = _choose_pair(found, table, issues)
    issues.raise_if_any()
    form, roles = pair
    used = [freq_col, *(found[r] for r in roles)]
    skip = check_rows(table, used, issues)
    lines = [line for line, _ in table.rows if line not in skip]
    f = read_values(table, freq_col, issues, skip, "positive")
    a = read_values(table, found[roles[0]], issues, skip, "positive" if form == "polar" else None)
    b = read_values(table, found[roles[1]], issues, skip)
    issues.raise_if_any()
    error = too_few(len(lines), table.file, "readable data rows")
    if error:
        raise error
    f_arr, lines, flip = _frequency_order(np.asarray(f), lines, table, freq_col, issues)
    issues.raise_if_any()
    a_arr, b_arr = np.asarray(a)[flip], np.asarray(b)[flip]
    z = _impedance(form, roles, f_arr, a_arr, b_arr, found, lines, issues)
    issues.raise_if_any()
    for col in found.values():
        if col not in used:
            notes.append(f"column '{col.header}' is not used")
    if "phase" in roles and not found["phase"].unit_text:
        notes.append(f"phase column '{found['phase'].header}' has no unit: taken as degrees")
    if flip[0] != 0:
        notes.append("points turned round: the file ran from high to low frequency")
    return ParsedImpedance(
        source=table.source,
        frequency_hz=f_arr,
        z_ohm=z,
        bias_v=bias,
        metadata=meta,
        notes=notes,
        layout=" and ".join(_LAYOUT[r] for r in roles),
        columns={"frequency": freq_col.header} | {r: found[r].header for r in roles},
        lines=lines,
    )


def _frequency_order(f, lines, table, col, issues):
    """Frequencies rising (a falling file turned round); a repeat or turn is an issue."""
    step = np.diff(f)
    flip = np.arange(f.size)
    if step.size and np.all(step < 0):
        flip = flip[::-1]
        return f[flip], [lines[i] for i in flip], flip
    bad = np.flatnonzero(step <= 0)
    if bad.size:
        i = int(bad[0]) + 1
        word = "repeats" if step[i - 1] == 0 else "falls below"
        issues.add(
            f"frequency {word} the one on line {lines[i - 1]}; an impedance sweep runs over "
            "rising (or falling) frequency",
            line=lines[i],
            column=col.header,
        )
    return f, lines, flip


def _impedance(form, roles, f, a, b, found, lines, issues) -> np.ndarray:
    """Complex impedance [ohm] from one pair of columns."""
    w = 2.0 * np.pi * f
    if form == "polar":
        scale = _ANGLE_UNITS.get((found["phase"].unit_text or "deg").strip().lower(), 1.0)
        return a * np.exp(1j * np.radians(b * scale))
    if form == "rect":
        return a + 1j * b
    loss = roles[1]
    zero = np.flatnonzero(a == 0)
    if zero.size:
        issues.add("capacitance 0 gives no finite impedance", line=lines[zero[0]],
                   column=found[roles[0]].header)  # fmt: skip
    if loss in ("d", "q", "rp"):
        nil = np.flatnonzero(b == 0) if loss in ("q", "rp") else np.array([], dtype=int)
        if nil.size:
            issues.add(f"{_LAYOUT[loss]} = 0 cannot be read as a loss", line=lines[nil[0]],
                       column=found[loss].header)  # fmt: skip
    if issues:
        return np.zeros(f.shape, dtype=complex)
    if form == "series":
        # series equivalent: D = ωCs·Rs, Q = 1/D
        if loss == "d":
            b = b / (w * a)
        elif loss == "q":
            b = 1.0 / (b * w * a)
        return b - 1j / (w * a)
    # parallel equivalent: G = 1/Rp, D = G/(ωCp), Q = 1/D
    if loss == "rp":
        g = 1.0 / b
    elif loss == "d":
        g = w * a * b
    elif loss == "q":
        g = w * a / b
    else:
        g = b
    y = g + 1j * w * a
    nil = np.flatnonzero(y == 0)
    if nil.size:
        issues.add("G and Cp both 0: no finite impedance", line=lines[nil[0]])
        return np.zeros(f.shape, dtype=complex)
    return 1.0 / y
