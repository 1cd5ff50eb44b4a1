"""Random bytes and mutated good files: the readers answer with sweeps or a ParseError,
never with any other exception."""

import io
import math
import zipfile
from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from labdb.ingest import ParseError, parse_calibration, parse_file, read_archive, sweep_from_arrays

SETTINGS = settings(
    max_examples=200,
    deadline=None,
    database=None,
    suppress_health_check=[HealthCheck.too_slow],
)
SAMPLES = Path(__file__).resolve().parent / "samples"
GOOD = {p.name: p.read_bytes() for p in sorted(SAMPLES.iterdir()) if p.suffix != ".py"}
NAMES = sorted(GOOD)
# fragments that steer a parser into its corners
TOKENS = [
    b",", b";", b"\t", b" ", b"\n", b"\r\n", b"\r", b"#", b"# unit: ", b"# kind: fv\n", b"-",
    b"e", b"E400", b"1e308", b"nan", b"n/a", b"(", b")", b"[", b"pF", b" nF", b"MHz", b"\xb5",
    b"\xce\xbc", b"\x00", b"\xff\xfe", b"\xef\xbb\xbf", b'"', b"0", b"-1", b"9" * 40, b":",
    b"PK\x03\x04", b"manifest.csv",
]  # fmt: skip


def check_sweeps(sweeps):
    """Whatever is returned obeys the contract: sorted, finite, positive readings."""
    for s in sweeps:
        assert s.kind in ("cv", "fv")
        reading = s.capacitance_f if s.kind == "cv" else s.frequency_hz
        assert reading.shape == s.bias_v.shape and s.bias_v.size >= 3
        assert np.all(np.isfinite(s.bias_v)) and np.all(reading > 0)
        assert np.all(np.diff(s.bias_v) >= 0)


def run(data: bytes, name: str) -> None:
    try:
        if name.endswith(".zip"):
            for entry in read_archive(data, name):
                assert (entry.error is None) or isinstance(entry.error, ParseError)
                check_sweeps(entry.sweeps)
        else:
            check_sweeps(parse_file(data, name))
    except ParseError as exc:
        assert exc.issues and all(isinstance(i.message, str) and i.message for i in exc.issues)


@st.composite
def mutated(draw):
    name = draw(st.sampled_from(NAMES))
    data = bytearray(GOOD[name])
    for _ in range(draw(st.integers(1, 6))):
        at = draw(st.integers(0, len(data)))
        op = draw(st.sampled_from(["insert", "delete", "replace", "truncate", "duplicate"]))
        if op == "insert":
            data[at:at] = draw(st.sampled_from(TOKENS) | st.binary(min_size=1, max_size=8))
        elif op == "delete":
            del data[at : at + draw(st.integers(1, 40))]
        elif op == "replace" and at < len(data):
            data[at] = draw(st.integers(0, 255))
        elif op == "truncate":
            del data[at:]
        else:
            data[at:at] = data[at : at + draw(st.integers(1, 60))]
    return bytes(data), name


@SETTINGS
@given(st.binary(max_size=3000), st.sampled_from(["a.csv", "a.txt", "a.xlsx", "a.zip", "a"]))
def test_random_bytes_raise_only_parse_error(data, name):
    run(data, name)
    run(data, "as_archive.zip")


@SETTINGS
@given(mutated())
def test_mutated_good_files_raise_only_parse_error(case):
    data, name = case
    run(data, name)
    if name == "calibration.csv":
        try:
            parse_calibration(data, name)
        except ParseError:
            pass


MANIFEST = (
    b"file,part,lot,unit,fixture,kind,temperature_c,illumination,measured_at,operator\n"
    b"m0.csv,BB131,L1,U01,meter-1,cv,25,dark,2024-07-15T10:00:00Z,rk\n"
    b"m1.csv,BB131,L1,U02,meter-1,cv,25 C,lit,2024-07-15,rk\n"
)
TEXT_NAMES = [n for n in NAMES if not n.endswith((".zip", ".xlsx"))]


@st.composite
def mutated_archive(draw):
    """A zip of mutated text samples, sometimes with a (mutated) manifest naming them."""
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for i in range(draw(st.integers(1, 3))):
            data = bytearray(GOOD[draw(st.sampled_from(TEXT_NAMES))])
            at = draw(st.integers(0, len(data)))
            data[at:at] = draw(st.sampled_from(TOKENS))
            zf.writestr(f"m{i}.csv", bytes(data))
        if draw(st.booleans()):
            manifest = bytearray(MANIFEST)
            at = draw(st.integers(0, len(manifest)))
            manifest[at:at] = draw(st.sampled_from(TOKENS))
            zf.writestr(draw(st.sampled_from(["manifest.csv", "d/manifest.csv"])), bytes(manifest))
    return buf.getvalue()


@SETTINGS
@given(mutated_archive())
def test_archives_of_mutated_files_raise_only_parse_error(data):
    run(data, "batch.zip")


NUMBERISH = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(10**400), max_value=10**400),
    st.text(max_size=5),
    st.none(),
    st.booleans(),
)


@SETTINGS
@given(
    st.lists(NUMBERISH, max_size=8),
    st.lists(NUMBERISH, max_size=8) | st.none(),
    st.lists(NUMBERISH, max_size=8) | st.none(),
)
def test_random_arrays_raise_only_parse_error(bias, cap, freq):
    try:
        s = sweep_from_arrays(bias, capacitance_f=cap, frequency_hz=freq)
    except ParseError:
        return
    check_sweeps([s])
    assert all(math.isfinite(v) for v in s.bias_v)
