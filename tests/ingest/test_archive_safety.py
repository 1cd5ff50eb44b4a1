"""Hostile archives: zip bombs, too many members, unsafe names, nesting, encryption."""

import io
import zipfile

import pytest

from labdb.ingest import ArchiveLimits, ParseError, read_archive
from labdb.ingest.archive import _Reader

GOOD = b"V_R (V),C (pF)\n0,12.5\n1,9.75\n2,8.125\n"


def zip_of(members, method=zipfile.ZIP_DEFLATED):
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", method) as zf:
        for name, data in members.items():
            zf.writestr(name, data)
    return buf.getvalue()


def test_it_refuses_a_zip_bomb_by_its_declared_ratio():
    bomb = zip_of({"good.csv": GOOD, "zeros.csv": bytes(8 * 1024 * 1024)})
    assert len(bomb) < 64 * 1024  # a deflated run of zeros packs ~1000:1
    with pytest.raises(ParseError) as info:
        read_archive(bomb, "bomb.zip")
    (issue,) = info.value.issues
    assert issue.file == "bomb.zip"
    assert "'zeros.csv'" in issue.message and "zip bomb" in issue.message


def _lie_about_size(raw: bytes, name: bytes, size: int) -> bytes:
    """Overwrite the uncompressed size of one member in both headers (APPNOTE 4.3.7/4.3.12)."""
    out = bytearray(raw)
    for signature, size_at, name_len_at, name_at in (
        (b"PK\x03\x04", 22, 26, 30),
        (b"PK\x01\x02", 24, 28, 46),
    ):
        pos = out.find(signature)
        while pos >= 0:
            n = int.from_bytes(out[pos + name_len_at : pos + name_len_at + 2], "little")
            if out[pos + name_at : pos + name_at + n] == name:
                out[pos + size_at : pos + size_at + 4] = size.to_bytes(4, "little")
            pos = out.find(signature, pos + 4)
    return bytes(out)


def test_it_does_not_trust_a_header_that_understates_the_size():
    raw = zip_of({"good.csv": GOOD, "zeros.csv": bytes(8 * 1024 * 1024)})
    liar = _lie_about_size(raw, b"zeros.csv", 1000)
    got = {e.name: e for e in read_archive(liar, "liar.zip")}
    assert got["good.csv"].error is None
    zeros = got["zeros.csv"]
    assert zeros.sweeps == [] and zeros.data == b""
    assert "damaged" in str(zeros.error)


class _Unbounded:
    """Stands in for a zip whose member yields more bytes than its header declares."""

    def __init__(self, payload: bytes):
        self.payload = payload

    def open(self, info):
        return io.BytesIO(self.payload)


def test_it_counts_actual_bytes_while_reading():
    info = zipfile.ZipInfo("x.csv")
    info.file_size, info.compress_size = 10, 10
    limits = ArchiveLimits(max_total_bytes=300_000, max_member_bytes=10**9)
    reader = _Reader(_Unbounded(bytes(400_000)), "a.zip", limits, size=10_000)
    with pytest.raises(ParseError, match="past its unpacked limit"):
        reader.read(info)
    ratio_limits = ArchiveLimits(max_ratio=10, ratio_floor_bytes=1000, max_member_bytes=10**9)
    reader = _Reader(_Unbounded(bytes(100_000)), "a.zip", ratio_limits, size=10**6)
    with pytest.raises(ParseError, match="zip bomb"):
        reader.read(info)  # 100 kB out of a declared 10 packed bytes


def test_it_refuses_too_many_members():
    data = zip_of({f"u{i:02d}.csv": GOOD for i in range(6)})
    with pytest.raises(ParseError, match="6 files in the archive; at most 5"):
        read_archive(data, "many.zip", ArchiveLimits(max_members=5))


def test_it_refuses_more_unpacked_bytes_than_allowed():
    data = zip_of({f"u{i}.csv": GOOD + b"#" * 1000 + b"\n" for i in range(3)})
    with pytest.raises(ParseError, match="unpacks to 3[0-9]{3} bytes; at most 2000"):
        read_archive(data, "big.zip", ArchiveLimits(max_total_bytes=2000))


def test_a_member_over_its_own_limit_is_an_error_on_that_member_only():
    data = zip_of({"good.csv": GOOD, "long.csv": GOOD + b"#" * 500 + b"\n"})
    got = {e.name: e for e in read_archive(data, "a.zip", ArchiveLimits(max_member_bytes=200))}
    assert got["good.csv"].error is None
    assert "limit 200" in str(got["long.csv"].error)


@pytest.mark.parametrize(
    ("name", "bad"),
    [
        ("traversal.zip", ["'../escape.csv'"]),
        ("absolute.zip", ["'/etc/cv.csv'", "'C:\\data\\cv.csv'"]),
    ],
)
def test_it_refuses_member_names_that_leave_the_archive(broken, name, bad):
    with pytest.raises(ParseError) as info:
        read_archive(broken(name), name)
    assert len(info.value.issues) == len(bad)
    for issue, member in zip(info.value.issues, bad, strict=True):
        assert issue.file == name
        assert member in issue.message and "points outside the archive" in issue.message


def test_it_does_not_open_nested_archives(broken):
    got = {e.name: e for e in read_archive(broken("nested.zip"), "nested.zip")}
    assert got["good.csv"].error is None
    for name in ("more.zip", "more_renamed.csv"):  # by extension and by content
        assert got[name].sweeps == []
        assert "archives inside the archive are not read" in str(got[name].error)


def test_it_refuses_encrypted_members(broken):
    got = {e.name: e for e in read_archive(broken("encrypted.zip"), "encrypted.zip")}
    assert got["good.csv"].error is None
    assert "encrypted" in str(got["secret.csv"].error)
    assert got["secret.csv"].error.issues[0].file == "secret.csv"


def test_it_refuses_bytes_that_are_not_a_zip(broken):
    with pytest.raises(ParseError, match="not a readable zip archive"):
        read_archive(broken("binary_junk.csv"), "junk.zip")
    with pytest.raises(ParseError, match="not a readable zip archive"):
        read_archive(b"", "empty.zip")
