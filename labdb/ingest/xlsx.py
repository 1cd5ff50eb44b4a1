"""Reader for Excel workbooks (.xlsx): the first sheet, or a named one.

The sheet follows the text conventions cell by cell: rows whose first cell starts with
``#`` are comments, and before the header they carry metadata either in one cell
(``# part: BB131``) or split over two (``# part`` | ``BB131``). The first other row is the
header; an optional row of bare units may follow; then data rows. Line numbers in
messages are worksheet row numbers.
"""

from __future__ import annotations

import io
import warnings
import zipfile
from datetime import date, datetime

from labdb.ingest.delimited import is_units_row
from labdb.ingest.errors import IssueList, ParseError
from labdb.ingest.table import RawTable, meta_pair

#: a workbook unpacking to more than this many bytes is refused before openpyxl sees it
MAX_UNPACKED_BYTES = 200 * 1024 * 1024
#: rows and columns read from one sheet (a sheet may declare a far larger extent)
MAX_ROWS = 100_000
MAX_COLUMNS = 256


def _text(cell: object) -> str:
    if cell is None:
        return ""
    if isinstance(cell, datetime | date):
        return cell.isoformat()
    if isinstance(cell, float) and cell.is_integer():
        return str(int(cell))
    return str(cell).strip()


def is_workbook(data: bytes) -> bool:
    """True when the bytes are a zip holding an Excel workbook part."""
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as zf:
            return "xl/workbook.xml" in zf.namelist()
    except (zipfile.BadZipFile, OSError, ValueError, EOFError):
        return False


def _load(data: bytes, file: str):
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as zf:
            unpacked = sum(info.file_size for info in zf.infolist())
    except (zipfile.BadZipFile, OSError, ValueError, EOFError):
        raise ParseError.at(file, "not a readable .xlsx workbook (broken zip)") from None
    if unpacked > MAX_UNPACKED_BYTES:
        raise ParseError.at(
            file, f"the workbook unpacks to {unpacked} bytes; more than we read from one upload"
        )
    import openpyxl  # imported late: text-only callers should not pay for it

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many types on damaged files; all mean the same
        raise ParseError.at(file, f"not a readable .xlsx workbook ({type(exc).__name__})") from None


def read_workbook(data: bytes, file: str, sheet: str | None = None) -> RawTable:
    """Read one worksheet into a :class:`RawTable`."""
    wb = _load(data, file)
    try:
        names = list(wb.sheetnames)
        if not names:
            raise ParseError.at(file, "the workbook has no sheets")
        if sheet is not None and sheet not in names:
            listed = ", ".join(f"'{n}'" for n in names)
            raise ParseError.at(file, f"no sheet named '{sheet}' (sheets: {listed})")
        ws = wb[sheet or names[0]]
        return _to_table(_rows(ws, file), f"{file} [{ws.title}]", file)
    finally:
        wb.close()


def _rows(ws, file: str) -> list[list]:
    """Cell values row by row, bounded so a sheet claiming a huge extent cannot stall us."""
    rows: list[list] = []
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            cells = ws.iter_rows(values_only=True, max_col=MAX_COLUMNS + 1)
            for number, row in enumerate(cells, start=1):
                if number > MAX_ROWS:
                    raise ParseError.at(file, f"the sheet has more than {MAX_ROWS} rows")
                if row and row[-1] is not None:
                    raise ParseError.at(
                        file, f"the sheet has more than {MAX_COLUMNS} columns", line=number
                    )
                rows.append(list(row[:MAX_COLUMNS]))
    except ParseError:
        raise
    except Exception as exc:  # damaged sheet XML surfaces here in read-only mode
        raise ParseError.at(file, f"cannot read the sheet ({type(exc).__name__})") from None
    return rows


def _to_table(rows: list[list], name: str, source: str) -> RawTable:
    table = RawTable(name, source, separator="cells")
    issues = IssueList(name)
    body: list[tuple[int, list]] = []
    for number, cells in enumerate(rows, start=1):
        while cells and _text(cells[-1]) == "":
            cells.pop()
        if not cells:
            continue
        first = _text(cells[0])
        if first.startswith("#"):
            if not table.header:
                _meta_row(table, first, cells[1:], number, issues)
            continue
        if not table.header:
            table.header = [_text(c) for c in cells]
            table.header_line = number
        else:
            body.append((number, cells))
    issues.raise_if_any()
    width = len(table.header)
    body = [(n, cells + [None] * (width - len(cells))) for n, cells in body]
    if body and is_units_row(body[0][1]):
        table.units_row = [_text(c) for c in body[0][1]]
        body = body[1:]
    table.rows = body
    return table


def _meta_row(table: RawTable, first: str, rest: list, number: int, issues: IssueList) -> None:
    values = [_text(c) for c in rest if _text(c)]
    pair = meta_pair(first)
    if pair is not None and not pair[1] and values:
        pair = (pair[0], values[0])
    elif pair is None and values:
        key = first.lstrip("#").strip()
        pair = (key, values[0]) if key else None
    if pair is not None:
        table.add_meta(pair[0], pair[1], number, issues)
