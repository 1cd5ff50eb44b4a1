"""Helpers for impedance tests: one-port files written from known series R–L–C values."""

from __future__ import annotations

import numpy as np
import pytest

#: Invented series equivalent of a small varactor (values chosen here, not measured).
RS, LS, CS = 0.5, 1.5e-9, 50e-12


def series_z(f, rs=RS, ls=LS, cs=CS):
    """Z = Rs + j(ωLs − 1/(ωCs)) written out here, independently of labdb [ohm]."""
    w = 2 * np.pi * np.asarray(f, dtype=float)
    return rs + 1j * (w * ls - 1 / (w * cs))


def s1p_bytes(
    rs=RS,
    ls=LS,
    cs=CS,
    *,
    bias="2 V",
    unit="U1",
    lot="L1",
    part="TST-V1",
    fixture="analyser A",
    n=201,
    f_lo=1e5,
    f_hi=1e9,
    noise=0.0,
    seed=3,
    fmt="RI",
    extra="",
) -> bytes:
    """A Touchstone one-port file (MHz, S11, ``fmt``, R 50) of a series R–L–C.

    S11 = (Z − 50)/(Z + 50) is computed here by the closed form; ``noise`` multiplies Z by
    1 + noise·(a + jb) with a, b standard normal from a seeded generator.
    """
    f = np.geomspace(f_lo, f_hi, n)
    z = series_z(f, rs, ls, cs)
    if noise:
        rng = np.random.default_rng(seed)
        z = z * (1 + noise * (rng.standard_normal(n) + 1j * rng.standard_normal(n)))
    s = (z - 50) / (z + 50)
    head = [
        f"! part: {part}", f"! lot: {lot}", f"! unit: {unit}", f"! fixture: {fixture}",
        "! temperature: 25 °C", "! measured at: 2026-03-01T10:00:00+00:00",
    ]  # fmt: skip
    if bias is not None:
        head.append(f"! bias: {bias}")
    head += [extra.rstrip("\n")] if extra else []
    head.append(f"# MHz S {fmt} R 50")
    rows = []
    for fi, si in zip(f, s, strict=True):
        if fmt == "RI":
            a, b = si.real, si.imag
        elif fmt == "MA":
            a, b = abs(si), np.degrees(np.angle(si))
        else:
            a, b = 20 * np.log10(abs(si)), np.degrees(np.angle(si))
        rows.append(f"{fi / 1e6:.12g} {a:.15g} {b:.15g}")
    return ("\n".join(head + rows) + "\n").encode()


@pytest.fixture
def make_s1p():
    return s1p_bytes


@pytest.fixture
def analyser(bench):
    """The ``bench`` catalogue plus an impedance analyser fixture (a meter-kind fixture)."""
    from labdb.measurements.models import Fixture

    bench.analyser = Fixture.objects.create(name="analyser A", kind="meter")
    return bench
