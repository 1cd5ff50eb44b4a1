"""Parsers for what a measurement bench produces: text tables, workbooks, zip archives.

Pure Python (numpy, openpyxl), no Django. Every reader returns SI values with reverse bias
positive, or raises :class:`ParseError` whose issues name file, line and column.
"""

from labdb.ingest.archive import ArchiveEntry, ArchiveLimits, read_archive
from labdb.ingest.arrays import sweep_from_arrays
from labdb.ingest.calibration import parse_calibration
from labdb.ingest.errors import Issue, ParseError
from labdb.ingest.files import parse_file
from labdb.ingest.metadata import merge_metadata, normalize_metadata
from labdb.ingest.sweep import ParsedCalibration, ParsedSweep
from labdb.ingest.units import parse_quantity

__all__ = [
    "ArchiveEntry",
    "ArchiveLimits",
    "Issue",
    "ParseError",
    "ParsedCalibration",
    "ParsedSweep",
    "merge_metadata",
    "normalize_metadata",
    "parse_calibration",
    "parse_file",
    "parse_quantity",
    "read_archive",
    "sweep_from_arrays",
]
