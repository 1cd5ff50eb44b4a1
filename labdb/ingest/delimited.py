"""Reader for delimited text: comma, semicolon, tab or whitespace separated tables.

Text is decoded as UTF-8 (with or without BOM), UTF-16 with a BOM, then Windows-1252 and
finally Latin-1, so a ``µ`` written as byte 0xB5 reads as µ. Lines end in LF, CRLF or CR;
line numbers in messages count lines of the original file from 1.

Layout: any number of blank lines and ``#`` comment lines, where ``# key: value`` lines
before the header are metadata; then the header row; then optionally a row of bare units
(``V, pF``); then data rows, among which blank and ``#`` lines are skipped. The separator
is taken from the header: a tab, else a semicolon, else a comma, else runs of spaces; a
spreadsheet's ``sep=;`` line before the header names it instead.
With any separator but the comma a decimal comma is accepted (``0,5;12,5``).
"""

from __future__ import annotations

import codecs
import csv
import re

from labdb.ingest.errors import IssueList, ParseError
from labdb.ingest.table import RawTable, meta_pair
from labdb.ingest.units import parse_number, parse_unit

#: share of control characters above which a file is taken as binary
CONTROL_SHARE = 0.05
_SEPARATORS = {"\t": "tabs", ";": "semicolons", ",": "commas", " ": "spaces"}
_SEP_LINE = re.compile(r"^sep=(.)$", re.IGNORECASE)
#: C0 controls other than tab, LF and CR, DEL, and the C1 controls (U+0080–U+009F)
_CONTROL_CHARS = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")


def decode(data: bytes, file: str) -> str:
    """Bytes to text, refusing empty and binary input."""
    if not data or not data.strip():
        raise ParseError.at(file, "the file is empty")
    if data.startswith(codecs.BOM_UTF8):
        data = data[len(codecs.BOM_UTF8) :]
    elif data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return _check_text(data.decode("utf-16"), file)
        except UnicodeDecodeError:
            raise ParseError.at(file, "not a text file (broken UTF-16)") from None
    if b"\x00" in data:
        raise ParseError.at(file, "not a text file (binary?): it contains NUL bytes")
    for encoding in ("utf-8", "cp1252", "latin-1"):
        try:
            return _check_text(data.decode(encoding), file)
        except UnicodeDecodeError:
            continue
    raise AssertionError("latin-1 decodes any bytes")  # pragma: no cover


def _check_text(text: str, file: str) -> str:
    text = text.lstrip("\ufeff")
    control = len(_CONTROL_CHARS.findall(text))
    if control > CONTROL_SHARE * max(len(text), 1):
        raise ParseError.at(file, "not a text file (binary?): mostly control characters")
    return text


def split_lines(text: str) -> list[str]:
    """Lines without their endings (LF, CRLF or CR), never joining or adding any."""
    return re.split(r"\r\n|\r|\n", text)


def separator_of(header: str) -> str:
    """The separator a header row uses (``" "`` meaning runs of whitespace)."""
    for sep in ("\t", ";", ","):
        if sep in header:
            return sep
    return " "


def split_cells(line: str, sep: str) -> list[str]:
    """Cells of one line (quotes are honoured for comma, semicolon and tab)."""
    if sep == " ":
        return line.split()
    row = next(csv.reader([line], delimiter=sep, skipinitialspace=True), [])
    return [cell.strip() for cell in row]


def split_space_header(header: str, width: int) -> list[str]:
    """Split a whitespace-separated header to ``width`` names where a reading allows.

    Tries, in turn: runs of two or more spaces (``V_R (V)  C (pF)``); single spaces with
    a bracketed unit joined to the name before it (``V_R (V) C (pF)``); and also a bare
    unit joined to its name (``bias V cap pF``).
    """
    wide = [t for t in re.split(r"\s{2,}|\t", header.strip()) if t]
    if len(wide) == width:
        return wide
    joined: list[str] = []
    for tok in header.split():
        if joined and tok[:1] in "([{":
            joined[-1] += " " + tok
        else:
            joined.append(tok)
    if len(joined) == width:
        return joined
    bare: list[str] = []
    for tok in joined:
        if bare and parse_unit(tok) is not None and parse_unit(bare[-1]) is None:
            bare[-1] += " " + tok
        else:
            bare.append(tok)
    return bare if len(bare) == width else joined


def is_units_row(cells: list) -> bool:
    """True for a row of bare units under the header (``V, pF``)."""
    texts = [str(c).strip() for c in cells if c is not None]
    units = [t for t in texts if t and t != "-"]
    if not units:
        return False
    for t in units:
        if parse_unit(t) is None:
            return False
        try:
            parse_number(t, True)
            return False
        except ValueError:
            pass
    return True


def read_delimited(data: bytes, file: str, source: str | None = None) -> RawTable:
    """Read delimited text into a :class:`RawTable` (header, rows, metadata)."""
    lines = split_lines(decode(data, file))
    table = RawTable(file, source or file)
    issues = IssueList(file)
    header_at = None
    forced: str | None = None
    for i, raw in enumerate(lines):
        s = raw.strip()
        if not s:
            continue
        if s.startswith("#"):
            pair = meta_pair(s)
            if pair is not None:
                table.add_meta(pair[0], pair[1], i + 1, issues)
            continue
        m = _SEP_LINE.match(s)
        if m and forced is None:  # spreadsheet hint line, e.g. "sep=;"
            forced = m.group(1)
            continue
        header_at = i
        break
    issues.raise_if_any()
    if header_at is None:
        raise ParseError.at(file, "no header row: the file holds only comments or blank lines")
    sep = forced if forced in _SEPARATORS else separator_of(lines[header_at])
    table.separator = _SEPARATORS[sep]
    table.decimal_comma = sep != ","
    table.header_line = header_at + 1
    body = [
        (i + 1, raw)
        for i, raw in enumerate(lines[header_at + 1 :], start=header_at + 1)
        if raw.strip() and not raw.lstrip().startswith("#")
    ]
    try:
        rows = [(line, split_cells(raw, sep)) for line, raw in body]
        if sep == " ":
            width = len(rows[0][1]) if rows else 0
            header = split_space_header(lines[header_at], width)
        else:
            header = split_cells(lines[header_at], sep)
    except csv.Error as exc:
        raise ParseError.at(file, f"cannot split the lines into cells ({exc})") from None
    while header and not header[-1]:
        header.pop()  # a trailing separator on the header line
    table.header = header
    if rows and is_units_row(rows[0][1]):
        table.units_row = [str(c) for c in rows[0][1]]
        rows = rows[1:]
    table.rows = rows
    return table
