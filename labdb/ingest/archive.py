"""Reader for zip archives of bench files, with an optional manifest.

Manifest: a member named ``manifest.csv`` (any letter case) at the top level or one folder
down; at most one. It is a delimited table (comma, semicolon or tab) with a header row and
these columns, all optional except ``file``::

    file, part, lot, unit, fixture, kind, temperature_c, illumination, measured_at, operator

``file`` is the member path relative to the manifest's folder (or to the archive root).
Further columns (e.g. ``notes``) are kept; names match loosely as in file metadata, and
values are normalised the same way. A file without a manifest row is still read, from its
own metadata. Any manifest problem (bad value, unknown or repeated file) refuses the whole
archive, since a half-applied manifest would label sweeps wrongly.

Safety: member names that are absolute (``/etc/x``, ``C:\\x``) or climb out (``../x``)
refuse the archive, as do too many members, more unpacked bytes than allowed (declared
sizes are checked first; actual bytes are counted while reading in bounded chunks) and a
compression ratio beyond the limit. Encrypted members, nested archives and members larger
than the per-member limit give an error on that entry only. Folders, ``__MACOSX/`` and
hidden files (``.DS_Store``) are skipped.
"""

from __future__ import annotations

import io
import lzma
import posixpath
import re
import struct
import zipfile
import zlib
from dataclasses import dataclass, field
from typing import Any

from labdb.ingest.delimited import read_delimited
from labdb.ingest.errors import Issue, IssueList, ParseError
from labdb.ingest.files import ARCHIVE_EXTENSIONS, extension, parse_file
from labdb.ingest.impedance import ParsedImpedance, is_impedance_file, parse_impedance_file
from labdb.ingest.metadata import normalize_metadata, squash_key
from labdb.ingest.sweep import ParsedSweep

MANIFEST_NAME = "manifest.csv"
MANIFEST_COLUMNS = (
    "file",
    "part",
    "lot",
    "unit",
    "fixture",
    "kind",
    "temperature_c",
    "illumination",
    "measured_at",
    "operator",
)
_CHUNK = 64 * 1024
_SKIPPED = {"thumbs.db", "desktop.ini"}
# what zipfile and the decompressors raise on damaged input
_ZIP_ERRORS = (
    zipfile.BadZipFile,
    zipfile.LargeZipFile,
    OSError,
    EOFError,
    ValueError,
    NotImplementedError,
    RuntimeError,
    struct.error,
    zlib.error,
    lzma.LZMAError,
    KeyError,
    IndexError,
    OverflowError,
)
_NESTED_MAGIC = (b"\x1f\x8b", b"7z\xbc\xaf\x27\x1c", b"Rar!", b"BZh", b"\xfd7zXZ")


@dataclass(frozen=True)
class ArchiveLimits:
    """Bounds on what one archive may unpack to.

    Attributes
    ----------
    max_members : int
        Most files (folders and skipped files not counted).
    max_total_bytes : int
        Most unpacked bytes over all members.
    max_ratio : float
        Largest unpacked/packed size ratio of a member (zip-bomb guard).
    max_member_bytes : int
        Largest unpacked member; a bigger one gets an error entry.
    ratio_floor_bytes : int
        The ratio is judged only for members unpacking to more than this (small text
        files compress very well and harm no one).
    """

    max_members: int = 1000
    max_total_bytes: int = 256 * 1024 * 1024
    max_ratio: float = 100.0
    max_member_bytes: int = 32 * 1024 * 1024
    ratio_floor_bytes: int = 1024 * 1024


@dataclass
class ArchiveEntry:
    """One member of an archive and what became of it.

    ``manifest`` is the member's normalised manifest row (None without one); ``error`` is
    set, and ``sweeps`` empty, when the member could not be read.
    """

    name: str
    data: bytes
    manifest: dict[str, Any] | None = None
    sweeps: list[ParsedSweep] = field(default_factory=list)
    error: ParseError | None = None
    impedance: ParsedImpedance | None = None  # set instead of sweeps for an impedance sweep


def _unsafe(name: str) -> bool:
    path = name.replace("\\", "/")
    parts = path.split("/")
    return path.startswith("/") or bool(re.match(r"^[A-Za-z]:", path)) or ".." in parts


def _skipped(name: str) -> bool:
    base = posixpath.basename(name.rstrip("/"))
    return (
        name.endswith("/")
        or name.startswith("__MACOSX/")
        or base.startswith(".")
        or base.lower() in _SKIPPED
    )


class _TooLarge(Exception):
    """A member over the per-member limit (an error on that entry only)."""


class _Reader:
    """Reads members in bounded chunks and keeps the running byte count."""

    def __init__(self, zf: zipfile.ZipFile, filename: str, limits: ArchiveLimits, size: int):
        self.zf, self.filename, self.limits, self.total = zf, filename, limits, 0
        self.size = size  # a member's packed bytes cannot exceed the archive's own size

    def bomb(self, name: str, why: str) -> ParseError:
        return ParseError.at(self.filename, f"member '{name}' {why}; archive refused")

    def read(self, info: zipfile.ZipInfo) -> bytes:
        """Member bytes; ParseError refuses the archive (bomb), _TooLarge only the entry."""
        lim = self.limits
        if info.file_size > lim.max_member_bytes:
            raise _TooLarge(f"unpacks to {info.file_size} bytes (limit {lim.max_member_bytes})")
        buf = bytearray()
        with self.zf.open(info) as fh:
            while chunk := fh.read(_CHUNK):
                buf += chunk
                self.total += len(chunk)
                if self.total > lim.max_total_bytes:
                    raise self.bomb(info.filename, "takes the archive past its unpacked limit")
                ratio = len(buf) / max(min(info.compress_size, self.size), 1)
                if len(buf) > lim.ratio_floor_bytes and ratio > lim.max_ratio:
                    raise self.bomb(info.filename, "unpacks far beyond its packed size (zip bomb?)")
                if len(buf) > lim.max_member_bytes:
                    raise _TooLarge(f"unpacks to more than {lim.max_member_bytes} bytes")
        return bytes(buf)


def _check_names(infos: list[zipfile.ZipInfo], filename: str, limits: ArchiveLimits) -> None:
    bad = [i.filename for i in infos if _unsafe(i.filename)]
    if bad:
        raise ParseError(
            Issue(filename, None, None, f"member name '{n}' points outside the archive "
                  "(absolute path or '..'); archive refused")
            for n in bad
        )  # fmt: skip
    members = [i for i in infos if not _skipped(i.filename)]
    if len(members) > limits.max_members:
        raise ParseError.at(
            filename, f"{len(members)} files in the archive; at most {limits.max_members}"
        )
    declared = sum(i.file_size for i in members)
    if declared > limits.max_total_bytes:
        raise ParseError.at(
            filename,
            f"the archive unpacks to {declared} bytes; at most {limits.max_total_bytes}",
        )
    for i in members:
        ratio = i.file_size / max(i.compress_size, 1)
        if i.file_size > limits.ratio_floor_bytes and ratio > limits.max_ratio:
            raise ParseError.at(
                filename,
                f"member '{i.filename}' unpacks {ratio:.0f} times its packed size "
                "(zip bomb?); archive refused",
            )


def _manifest_rows(data: bytes, name: str, members: set[str]) -> dict[str, dict[str, Any]]:
    """Member name -> normalised manifest row; ParseError for any manifest problem."""
    table = read_delimited(data, name)
    issues = IssueList(name)
    keys = [squash_key(h) for h in table.header]
    if "file" not in keys and "filename" not in keys:
        issues.add("manifest has no 'file' column", line=table.header_line)
        issues.raise_if_any()
    file_col = keys.index("file") if "file" in keys else keys.index("filename")
    folder = posixpath.dirname(name)
    rows: dict[str, dict[str, Any]] = {}
    for line, cells in table.rows:
        cells = [str(c) for c in cells]
        if len([c for c in cells if c]) > len(table.header):
            issues.add(f"row has more values than the {len(table.header)} columns", line=line)
            continue
        ref = cells[file_col].strip().replace("\\", "/") if file_col < len(cells) else ""
        ref = ref.removeprefix("./")
        if not ref:
            issues.add("row has no file name", line=line, column=table.header[file_col])
            continue
        options = [posixpath.join(folder, ref), ref] if folder else [ref]
        member = next((m for m in options if m in members), None)
        if member is None:
            issues.add(f"'{ref}' is not in the archive", line=line, column=table.header[file_col])
            continue
        if member in rows:
            issues.add(f"'{ref}' has more than one row", line=line, column=table.header[file_col])
            continue
        raw = {
            h: c for i, (h, c) in enumerate(zip(table.header, cells, strict=False)) if i != file_col
        }
        meta, problems = normalize_metadata(
            raw, name, dict.fromkeys(raw, line), table.decimal_comma
        )
        issues.extend(problems)
        rows[member] = meta
    issues.raise_if_any()
    return rows


def _nested(name: str, data: bytes) -> bool:
    if extension(name) in ARCHIVE_EXTENSIONS:
        return True
    if data.startswith(_NESTED_MAGIC):
        return True
    return data.startswith(b"PK\x03\x04") and extension(name) not in (".xlsx", ".xlsm")


def read_archive(
    data: bytes,
    filename: str,
    limits: ArchiveLimits = ArchiveLimits(),  # noqa: B008 (frozen)
) -> list[ArchiveEntry]:
    """Read every bench file in a zip archive.

    Parameters
    ----------
    data : bytes
        The zip archive.
    filename : str
        Its name, for messages.
    limits : ArchiveLimits
        Bounds on members and unpacked bytes (defaults: :class:`ArchiveLimits`).

    Returns
    -------
    list of ArchiveEntry
        One per member file in archive order (manifest, folders and hidden files
        excluded). A member that cannot be read has ``error`` set; the others still parse.

    Raises
    ------
    ParseError
        When the archive as a whole is refused: not a zip, unsafe member names, too many
        members, too many unpacked bytes, a zip bomb, or a broken manifest.
    """
    try:
        zf = zipfile.ZipFile(io.BytesIO(bytes(data)))
        infos = zf.infolist()
    except _ZIP_ERRORS:
        raise ParseError.at(filename, "not a readable zip archive") from None
    with zf:
        _check_names(infos, filename, limits)
        members = [i for i in infos if not _skipped(i.filename)]
        manifests = [
            i for i in members
            if posixpath.basename(i.filename).lower() == MANIFEST_NAME
            and i.filename.count("/") <= 1
        ]  # fmt: skip
        if len(manifests) > 1:
            names = ", ".join(f"'{i.filename}'" for i in manifests)
            raise ParseError.at(filename, f"more than one manifest ({names}); keep one")
        reader = _Reader(zf, filename, limits, len(data))
        rows: dict[str, dict[str, Any]] = {}
        if manifests:
            info = manifests[0]
            try:
                raw = reader.read(info)
            except (_TooLarge, *_ZIP_ERRORS) as exc:
                raise ParseError.at(filename, f"cannot read {info.filename} ({exc})") from None
            names = {i.filename for i in members if i is not info}
            rows = _manifest_rows(raw, info.filename, names)
        return [
            _entry(reader, info, rows.get(info.filename))
            for info in members
            if not manifests or info is not manifests[0]
        ]


def _entry(reader: _Reader, info: zipfile.ZipInfo, manifest: dict | None) -> ArchiveEntry:
    name = info.filename
    entry = ArchiveEntry(name, b"", manifest)

    def fail(message: str) -> ArchiveEntry:
        entry.error = ParseError.at(name, message)
        return entry

    if info.flag_bits & 0x1:
        return fail("the member is encrypted (password-protected); add it unencrypted")
    if extension(name) in ARCHIVE_EXTENSIONS:
        return fail("archives inside the archive are not read; unpack it first")
    if posixpath.basename(name).lower() == MANIFEST_NAME:
        return fail("a manifest must be at the top level or one folder down")
    try:
        entry.data = reader.read(info)
    except _TooLarge as exc:
        return fail(f"the member {exc}")
    except _ZIP_ERRORS as exc:
        return fail(f"the member is damaged or uses an unsupported compression ({exc})")
    if _nested(name, entry.data):
        return fail("archives inside the archive are not read; unpack it first")
    try:
        if is_impedance_file(entry.data, name):
            entry.impedance = parse_impedance_file(entry.data, name)
        else:
            entry.sweeps = parse_file(entry.data, name)
    except ParseError as exc:
        entry.error = exc
    return entry
