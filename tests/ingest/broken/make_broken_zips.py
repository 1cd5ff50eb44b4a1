"""Write the small hostile archives beside this script (the zip bomb is built in its test).

Run once with ``python tests/ingest/broken/make_broken_zips.py``; the outputs are committed.
"""

from __future__ import annotations

import io
import zipfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
GOOD = "V_R (V),C (pF)\n0,12.5\n1,9.75\n2,8.125\n"
STAMP = (2024, 7, 16, 12, 0, 0)


def archive(members: dict[str, bytes | str], encrypted: tuple[str, ...] = ()) -> bytes:
    """A zip of the given members; names in ``encrypted`` get the encryption flag set."""
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, data in members.items():
            zf.writestr(zipfile.ZipInfo(name, STAMP), data, zipfile.ZIP_DEFLATED)
    raw = bytearray(buf.getvalue())
    for name in encrypted:
        _set_encrypted_flag(raw, name.encode())
    return bytes(raw)


def _set_encrypted_flag(raw: bytearray, name: bytes) -> None:
    """Set bit 0 ("encrypted") of the general-purpose flags in both headers of a member.

    zipfile cannot write encrypted members; the flag alone is what a reader must refuse.
    Offsets from the ZIP application note (APPNOTE.TXT 4.3.7 and 4.3.12).
    """
    for signature, flag_at, name_len_at, name_at in (
        (b"PK\x03\x04", 6, 26, 30),  # local file header
        (b"PK\x01\x02", 8, 28, 46),  # central directory header
    ):
        start = 0
        while (pos := raw.find(signature, start)) >= 0:
            length = int.from_bytes(raw[pos + name_len_at : pos + name_len_at + 2], "little")
            if raw[pos + name_at : pos + name_at + length] == name:
                raw[pos + flag_at] |= 0x01
            start = pos + 4


def main() -> None:
    (HERE / "traversal.zip").write_bytes(archive({"ok.csv": GOOD, "../escape.csv": GOOD}))
    (HERE / "absolute.zip").write_bytes(archive({"/etc/cv.csv": GOOD, "C:\\data\\cv.csv": GOOD}))
    inner = archive({"inner.csv": GOOD})
    (HERE / "nested.zip").write_bytes(
        archive({"good.csv": GOOD, "more.zip": inner, "more_renamed.csv": inner})
    )
    (HERE / "encrypted.zip").write_bytes(
        archive({"good.csv": GOOD, "secret.csv": GOOD}, encrypted=("secret.csv",))
    )
    (HERE / "bad_member.zip").write_bytes(
        archive(
            {
                "good.csv": GOOD,
                "bad.csv": GOOD.replace("9.75", "n/a"),
                "notes.pdf": b"%PDF-1.4\x00\x01",
            }
        )
    )
    (HERE / "bad_manifest.zip").write_bytes(
        archive(
            {
                "manifest.csv": "file,temperature_c,illumination\n"
                "good.csv,hot,dark\nmissing.csv,25,dark\n",
                "good.csv": GOOD,
            }
        )
    )


if __name__ == "__main__":
    main()
