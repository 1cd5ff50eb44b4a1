"""Write the binary samples beside this script: workbook.xlsx and batch.zip.

Run once with ``python tests/ingest/samples/make_binary_samples.py``; the outputs are
committed so the tests do not depend on this script. Numbers here are the ones the tests
check against.
"""

from __future__ import annotations

import io
import zipfile
from datetime import datetime
from pathlib import Path

import openpyxl

HERE = Path(__file__).resolve().parent
FIXED = datetime(2024, 7, 16, 12, 0, 0)


def make_workbook() -> bytes:
    """Two sheets: 'Sweep' (one sweep, metadata in cells) and 'Wide' (one column per unit)."""
    wb = openpyxl.Workbook()
    wb.properties.created = FIXED
    wb.properties.modified = FIXED
    ws = wb.active
    ws.title = "Sweep"
    ws.append(["# part: BB131"])  # metadata in one cell
    ws.append(["# lot", "L2024-07"])  # metadata split over two cells
    ws.append(["# unit:", "U05"])
    ws.append(["# temperature", 25])
    ws.append(["# measured at", datetime(2024, 7, 15, 9, 45)])
    ws.append([])
    ws.append(["V_R (V)", "C (pF)", "Q"])
    ws.append([0, 12.5, 120])
    ws.append([1, 9.75, 140])
    ws.append(["# a comment row inside the data"])
    ws.append([2, 8.125, 155])
    ws.append([4, "6.5", 170])  # a number stored as text
    wide = wb.create_sheet("Wide")
    wide.append(["# quantity", "capacitance"])
    wide.append(["bias (V)", "U01 (pF)", "U02 (pF)"])
    wide.append([0, 12.5, 12.75])
    wide.append([2, 8.125, 8.25])
    wide.append([4, 6.5, 6.625])
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


MANIFEST = """file,part,lot,unit,fixture,kind,temperature_c,illumination,measured_at,operator
u01.csv,BB131,L2024-07,U01,meter-1,cv,25,dark,2024-07-15T10:00:00Z,rk
u02.csv,BB131,L2024-07,U02,meter-1,cv,25,dark,2024-07-15T10:05:00Z,rk
"""
U01 = "V_R (V),C (pF)\n0,12.5\n1,9.75\n2,8.125\n4,6.5\n"
U02 = "# lot: L2024-06\nV_R (V),C (pF)\n0,12.75\n1,10.0\n2,8.25\n4,6.625\n"
U03 = "# part: BB131\n# unit: U03\nV_R (V),C (pF)\n0,12.25\n1,9.5\n2,8.0\n4,6.375\n"


def make_archive(workbook: bytes) -> bytes:
    """A batch folder with a manifest, two listed files, one unlisted file and a workbook."""
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:

        def add(name: str, data: bytes | str) -> None:
            zf.writestr(zipfile.ZipInfo(name, FIXED.timetuple()[:6]), data)

        add("batch/", b"")
        add("batch/manifest.csv", MANIFEST)
        add("batch/u01.csv", U01)
        add("batch/u02.csv", U02)
        add("batch/u03_no_manifest_row.csv", U03)
        add("batch/sweeps.xlsx", workbook)
        add("__MACOSX/batch/._u01.csv", b"\x00\x05\x16\x07junk")
        add("batch/.DS_Store", b"\x00\x00\x00\x01Bud1")
    return buf.getvalue()


if __name__ == "__main__":
    book = make_workbook()
    (HERE / "workbook.xlsx").write_bytes(book)
    (HERE / "batch.zip").write_bytes(make_archive(book))
