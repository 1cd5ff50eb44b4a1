"""Helpers for the checks against the ngspice circuit simulator: run a netlist, read wrdata."""

import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

#: Lines that open every .control block: full precision, one scale column, a header line per
#: wrdata call, and appending so a loop collects one block per run.
WRDATA_SETUP = """set numdgt=15
set wr_singlescale
set wr_vecnames
set appendwrite"""


def read_wrdata(path: Path) -> list[dict[str, np.ndarray]]:
    """Blocks of an appended wrdata file: one dict of column name → values per wrdata call."""
    blocks: list[dict[str, list[float]]] = []
    names: list[str] = []
    for line in path.read_text().splitlines():
        tokens = line.split()
        if not tokens:
            continue
        try:
            values = [float(t) for t in tokens]
        except ValueError:  # a header line starts a new block
            names = tokens
            blocks.append({n: [] for n in names})
            continue
        for n, x in zip(names, values, strict=True):
            blocks[-1][n].append(x)
    return [{n: np.array(col) for n, col in b.items()} for b in blocks]


@pytest.fixture
def wrdata_setup() -> str:
    return WRDATA_SETUP


@pytest.fixture
def ngspice(tmp_path):
    """Run a netlist in batch mode in tmp_path and return the blocks of its wrdata file."""
    exe = shutil.which("ngspice")
    if exe is None:
        pytest.skip("ngspice is not installed (Debian/Ubuntu: apt-get install ngspice)")

    def run(netlist: str, output: str = "out.txt") -> list[dict[str, np.ndarray]]:
        out = tmp_path / output
        out.unlink(missing_ok=True)  # wrdata appends: never read an earlier run's rows
        cir = tmp_path / "check.cir"
        cir.write_text(netlist)
        proc = subprocess.run(
            [exe, "-b", str(cir)], cwd=tmp_path, capture_output=True, text=True, timeout=60
        )
        # ngspice exits 0 even when a .control line fails, so look for its error lines too.
        errors = [ln for ln in (proc.stdout + proc.stderr).splitlines() if ln.startswith("Error")]
        if proc.returncode != 0 or errors or not out.exists():
            pytest.fail(
                f"ngspice failed (exit {proc.returncode}) on {cir}:\n"
                + "\n".join(errors)
                + f"\n{proc.stdout[-2000:]}\n{proc.stderr[-2000:]}"
            )
        return read_wrdata(out)

    return run
