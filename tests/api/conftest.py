"""API personas (anonymous, session roles, read and write tokens) and a stored sweep."""

from __future__ import annotations

import pytest

#: Who calls: no credentials, a session of each role, and a member's tokens of each scope.
PERSONAS = ("anonymous", "outsider", "viewer", "member", "curator", "token_read", "token_write")


@pytest.fixture(autouse=True)
def _fast_and_fresh(settings):
    # Password hashing at full strength costs ~0.3 s per persona; these tests check access
    # rules, not hashing. The cache holds throttle counters: start every test from zero.
    from django.core.cache import cache

    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]
    cache.clear()
    yield
    cache.clear()


@pytest.fixture
def client_for(request, db):
    """``client_for(persona)``: an APIClient acting as one of :data:`PERSONAS`."""
    from rest_framework.test import APIClient

    from labdb.api.tokens import mint_token

    def make(persona: str, owner: str = "member") -> APIClient:
        client = APIClient()
        if persona == "anonymous":
            return client
        if persona.startswith("token_"):
            user = request.getfixturevalue(owner)
            _, key = mint_token(user, persona.removeprefix("token_"), name=persona)
            client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
            return client
        client.force_login(request.getfixturevalue(persona))
        return client

    return make


@pytest.fixture
def stored_sweep(bench, make_cv):
    """One C–V sweep of unit U1 in lot L1 of TST-V1, recorded through the service (fit v1)."""
    from labdb.measurements.services import record_file

    (out,) = record_file(make_cv(cjo=47e-12, vj=0.8, m=0.55), "u1.csv", recompute=False)
    assert out.status == "stored", out.problems
    return out.sweep


#: Junction parameters behind the invented lot band below: the 10th, 50th and 90th
#: percentile curves are junction curves with these (CJO [F], VJ [V], M).
BAND_PARAMS = {"p10": (42e-12, 0.75, 0.52), "p50": (47e-12, 0.8, 0.55), "p90": (52e-12, 0.85, 0.58)}


@pytest.fixture
def band_params():
    return BAND_PARAMS


@pytest.fixture
def lot_summary(stored_sweep):
    """A hand-made summary of lot L1 (dark, 25 °C) whose band curves follow BAND_PARAMS.

    Written directly: these tests read summaries, the quality service computes them.
    """
    import numpy as np

    from labdb.physics import junction_capacitance
    from labdb.quality.models import LotSummary

    bias = np.linspace(0.0, 20.0, 41)
    band = {"bias_v": bias.tolist()}
    for key, (cjo, vj, m) in BAND_PARAMS.items():
        band[key] = junction_capacitance(bias, cjo, vj, m).tolist()
    cjo, vj, m = BAND_PARAMS["p50"]
    return LotSummary.objects.create(
        lot=stored_sweep.unit.lot,
        illumination="dark",
        temperature_c=25.0,
        n_units=1,
        n_sweeps=1,
        cjo_med=cjo,
        vj_med=vj,
        m_med=m,
        bias_min_v=0.0,
        bias_max_v=20.0,
        band=band,
    )


def _read_wrdata(path) -> list[dict]:
    """Blocks of an appended wrdata file (a header line starts each block)."""
    import numpy as np

    blocks: list[dict] = []
    names: list[str] = []
    for line in path.read_text().splitlines():
        tokens = line.split()
        if not tokens:
            continue
        try:
            values = [float(t) for t in tokens]
        except ValueError:
            names = tokens
            blocks.append({n: [] for n in names})
            continue
        for n, x in zip(names, values, strict=True):
            blocks[-1][n].append(x)
    return [{n: np.array(col) for n, col in b.items()} for b in blocks]


@pytest.fixture
def ngspice_cv(tmp_path):
    """``ngspice_cv(card, element_lines, biases)`` → (bias [V], C [F]) from an AC analysis.

    The recipe of REFERENCES.md (ngspice section): cathode node ``k`` driven by
    ``DC <V_R> AC 1``, anode grounded, one AC point at 1 MHz per bias, C = Im(−i(v1))/(2πf),
    written by wrdata at 15 digits; ``.temp 27`` equals TNOM so CJO and VJ are not scaled.
    """
    import shutil
    import subprocess

    import numpy as np

    exe = shutil.which("ngspice")
    if exe is None:
        pytest.skip("ngspice is not installed (apt-get install ngspice)")

    def run(card: str, element_lines: str, biases) -> tuple:
        (tmp_path / "card.lib").write_text(card)
        out = tmp_path / "out.txt"
        out.unlink(missing_ok=True)  # wrdata appends
        steps = " ".join(repr(float(v)) for v in biases)
        netlist = f"""* C(V) of an exported card
.include card.lib
v1 k 0 DC 0 AC 1
{element_lines}
.temp 27
.control
set numdgt=15
set wr_singlescale
set wr_vecnames
set appendwrite
foreach vr {steps}
  alter v1 dc = $vr
  ac lin 1 1meg 1meg
  let y = -i(v1)
  let c = imag(y)/(2*pi*real(frequency))
  let vb = real(frequency)*0 + $vr
  wrdata out.txt vb c
end
quit
.endc
.end
"""
        (tmp_path / "check.cir").write_text(netlist)
        proc = subprocess.run(
            [exe, "-b", "check.cir"], cwd=tmp_path, capture_output=True, text=True, timeout=60
        )
        errors = [ln for ln in (proc.stdout + proc.stderr).splitlines() if ln.startswith("Error")]
        if proc.returncode != 0 or errors or not out.exists():
            pytest.fail(f"ngspice failed: {errors}\n{proc.stdout[-2000:]}\n{proc.stderr[-2000:]}")
        blocks = _read_wrdata(out)
        return (
            np.array([b["vb"][0] for b in blocks]),
            np.array([b["c"][0] for b in blocks]),
            proc.stdout + proc.stderr,
        )

    return run


@pytest.fixture
def parse_card():
    """Parse a SPICE card's ``.model`` line: (name, {PARAM: float})."""
    import re

    def parse(card: str) -> tuple[str, dict[str, float]]:
        (line,) = [ln for ln in card.splitlines() if ln.lower().startswith(".model")]
        match = re.fullmatch(r"\.model\s+(\w+)\s+D\((.*)\)", line.strip())
        assert match, line
        params = dict(re.findall(r"(\w+)=([^\s)]+)", match.group(2)))
        return match.group(1), {k.upper(): float(v) for k, v in params.items()}

    return parse


@pytest.fixture
def errors_of():
    """``errors_of(response)`` → {field: message} of a 4xx answer in the API's error shape."""

    def read(response) -> dict[str, str]:
        return {e.get("field", ""): e["message"] for e in response.json()["errors"]}

    return read
