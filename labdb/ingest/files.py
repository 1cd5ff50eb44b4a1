"""Entry point for one uploaded file: choose the reader by extension, then by content."""

from __future__ import annotations

import os

from labdb.ingest.build import table_to_sweeps
from labdb.ingest.delimited import read_delimited
from labdb.ingest.errors import ParseError
from labdb.ingest.sweep import ParsedSweep
from labdb.ingest.table import RawTable
from labdb.ingest.xlsx import is_workbook, read_workbook

TEXT_EXTENSIONS = {".csv", ".tsv", ".txt", ".dat", ".asc", ".prn", ".tab", ""}
WORKBOOK_EXTENSIONS = {".xlsx", ".xlsm"}
ARCHIVE_EXTENSIONS = {".zip", ".7z", ".rar", ".tar", ".gz", ".tgz", ".bz2", ".xz"}
_ZIP_MAGIC = b"PK\x03\x04"
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # legacy .xls and other OLE documents


def extension(filename: str) -> str:
    """Lower-case extension with the dot (``""`` if none)."""
    return os.path.splitext(filename)[1].lower()


def read_table(data: bytes, filename: str, sheet: str | None = None) -> RawTable:
    """The raw table of a text file or workbook, chosen by extension then content."""
    if not isinstance(data, bytes | bytearray | memoryview):
        raise TypeError(f"data must be bytes, not {type(data).__name__}")
    data = bytes(data)
    ext = extension(filename)
    if data.startswith(_ZIP_MAGIC):
        if ext in WORKBOOK_EXTENSIONS or (ext not in ARCHIVE_EXTENSIONS and is_workbook(data)):
            return read_workbook(data, filename, sheet)
        raise ParseError.at(
            filename, "this is a zip archive, not a sweep file; upload it as an archive"
        )
    if ext in ARCHIVE_EXTENSIONS:
        raise ParseError.at(filename, f"'{ext}' archives are not read here; upload a .zip")
    if data.startswith(_OLE_MAGIC):  # a text export named .xls is still read as text
        raise ParseError.at(
            filename, "old Excel (.xls) files are not read; save the sheet as .xlsx or CSV"
        )
    if ext in WORKBOOK_EXTENSIONS:
        if not data:
            raise ParseError.at(filename, "the file is empty")
        raise ParseError.at(filename, "not a readable .xlsx workbook (no zip signature)")
    return read_delimited(data, filename)


def parse_file(data: bytes, filename: str, sheet: str | None = None) -> list[ParsedSweep]:
    """Parse one bench file into sweeps.

    Parameters
    ----------
    data : bytes
        The file as uploaded (kept byte-for-byte by the caller).
    filename : str
        Name used to pick the reader (``.csv``, ``.tsv``, ``.txt``, ``.dat``, ``.xlsx``;
        other names are sniffed) and in every message.
    sheet : str, optional
        Worksheet of a workbook (default: the first). Ignored for text files.

    Returns
    -------
    list of ParsedSweep
        One sweep, or one per unit column of a wide file.

    Raises
    ------
    ParseError
        Anything that stops the file from being read, with line and column.
    """
    return table_to_sweeps(read_table(data, filename, sheet))
