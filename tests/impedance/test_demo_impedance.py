"""The demo's bias series of impedance sweeps: files encode truth.json, seed_demo derives a C–V.

The file check reads the Touchstone text with a few lines of its own and fits the series
R–L–C with scipy.optimize.curve_fit (a general-purpose reference fitter), independently of
labdb's reader and fitter.
"""

import json
import math
from functools import cache
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import curve_fit

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "fixtures" / "demo"


@cache
def _truth() -> dict:
    return json.loads((DEMO / "truth.json").read_text(encoding="utf-8"))


def _read_s1p(path: Path) -> tuple[np.ndarray, np.ndarray]:
    """Frequency [Hz] and Z [Ω] of a '# MHz S MA R 50' file (what the demo writes)."""
    rows = []
    for line in path.read_text(encoding="utf-8").splitlines():
        if line.startswith("#"):
            assert line.split() == ["#", "MHz", "S", "MA", "R", "50"]
        elif line and not line.startswith("!"):
            rows.append([float(t) for t in line.split()])
    f, mag, ang = np.array(rows).T
    s = mag * np.exp(1j * np.radians(ang))
    return f * 1e6, 50 * (1 + s) / (1 - s)


def _stacked(f, rs, ls_nh, cs_pf):
    n = f.size // 2
    w = 2 * np.pi * f[:n]
    return np.concatenate([np.full(n, rs), w * ls_nh * 1e-9 - 1 / (w * cs_pf * 1e-12)])


def test_the_series_covers_the_promised_biases_and_points():
    recs = _truth()["impedance_sweeps"]
    assert [r["bias_v"] for r in recs] == [0, 1, 2, 4, 8, 12, 20]
    assert {(r["part"], r["lot"], r["unit"]) for r in recs} == {("QSV-3052", "VX25A", "U01")}
    for r in recs:
        f, _ = _read_s1p(DEMO / r["file"])
        assert f.size == 201 and f[0] == 1e5 and f[-1] == 1e9


@pytest.mark.parametrize("i", range(7))
def test_curve_fit_on_each_file_recovers_the_true_equivalent(i):
    r = _truth()["impedance_sweeps"][i]
    f, z = _read_s1p(DEMO / r["file"])
    y = np.concatenate([z.real, z.imag])
    sigma = np.concatenate([np.abs(z), np.abs(z)])  # relative weighting, as labdb does
    p0 = [1.0, 1.0, 10.0]
    p, cov = curve_fit(_stacked, np.concatenate([f, f]), y, p0, sigma=sigma)
    se = np.sqrt(np.diag(cov))
    want = [r["rs_ohm"], r["ls_h"] * 1e9, r["cs_f"] * 1e12]
    # within 4 standard errors (0.1 % reading noise), and the errors small enough to matter
    assert np.all(np.abs(p - want) <= 4 * se), (p, want, se)
    assert se[2] / p[2] < 1e-4 and se[1] / p[1] < 1e-3 and se[0] / p[0] < 0.02


@pytest.fixture
def impedance_only_demo(tmp_path):
    """The demo folder cut down to the varactor's catalogue entries and the impedance files,
    so seed_demo's impedance step is checked without importing every C–V file."""
    import shutil

    catalog = json.loads((DEMO / "catalog.json").read_text(encoding="utf-8"))
    catalog["parts"] = [p for p in catalog["parts"] if p["part_number"] == "QSV-3052"]
    catalog["lots"] = [lot for lot in catalog["lots"] if lot["code"] == "VX25A"]
    catalog["calibrations"] = []
    (tmp_path / "sweeps").mkdir()
    (tmp_path / "catalog.json").write_text(json.dumps(catalog), encoding="utf-8")
    shutil.copytree(DEMO / catalog["impedance_dir"], tmp_path / catalog["impedance_dir"])
    return tmp_path


@pytest.mark.django_db
def test_seed_demo_stores_the_series_and_derives_a_fitted_c_v(impedance_only_demo, capsys):
    from django.core.management import call_command

    from labdb.measurements.models import Sweep

    call_command("seed_demo", "--no-users", "--path", str(impedance_only_demo))
    assert "demo impedance sweeps: 7 stored" in capsys.readouterr().out
    zf = Sweep.objects.filter(kind="zf")
    assert zf.count() == 7 and all(s.impedance_fits.count() == 1 for s in zf)
    (cv,) = Sweep.objects.filter(kind="cv", derived_from__isnull=False).distinct()
    assert cv.derived_from.count() == 7 and cv.current_fit.version == 1
    # default frequency: lowest SRF (0 V, ~579 MHz) / 10 rounded down to 1-2-5 = 50 MHz
    assert cv.test_frequency_hz == 50e6
    w2 = (2 * math.pi * 50e6) ** 2
    recs = _truth()["impedance_sweeps"]
    want = [r["cs_f"] / (1 - w2 * r["ls_h"] * r["cs_f"]) for r in recs]  # Ceff of the circuit
    np.testing.assert_allclose(cv.points["capacitance_f"], want, rtol=5e-4)
    call_command("seed_demo", "--no-users", "--path", str(impedance_only_demo))
    assert "7 already there; C–V derived from 0 bias series" in capsys.readouterr().out
    assert Sweep.objects.filter(kind="cv", derived_from__isnull=False).distinct().count() == 1
