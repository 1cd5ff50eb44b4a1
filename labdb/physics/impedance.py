"""Impedance against test frequency: S11 ↔ Z, a series R–L–C equivalent fit, SRF, Q, ESR, Ceff.

The series equivalent of a packaged junction is Z(f) = Rs + j(ωLs − 1/(ωCs)), ω = 2πf: Rs the
series (loss) resistance, Ls the package and lead inductance, Cs the capacitance. Written
with the elastance D = 1/Cs it is *linear* in (Rs, Ls, D):

    Re Z = Rs,     Im Z = ω·Ls − D/ω,

so the least-squares fit on the stacked real and imaginary parts is a bounded *linear*
problem whose Jacobian (the design matrix) is exact; it has one minimum and needs no
starting point. Each residual is divided by |Z| of its point (relative weighting), since
|Z| spans decades over a sweep from far below to beyond self-resonance. Standard errors
come from s²·(AᵀA)⁻¹ with s² = SSR/(2n − 3) and are carried to Cs = 1/D to first order.

Derived figures: self-resonant frequency f₀ = 1/(2π√(Ls·Cs)); Q(f) = |X|/R; effective
capacitance Ceff(f) = −1/(2πf·X) where X < 0, which for the series model is
Cs/(1 − ω²LsCs). A frequency is "well below" self-resonance when f ≤ f₀/10
(:data:`WELL_BELOW`); there Ceff differs from Cs by at most ~1 %.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import lsq_linear

from labdb.physics.errors import PhysicsInputError

#: Version of the impedance fitting method, stored with every fit; bump when results change.
IMPEDANCE_FITTER_VERSION = "labdb-rlc 1"
#: f ≤ SRF / WELL_BELOW counts as well below self-resonance: Ceff/Cs − 1 ≤ 1/(WELL_BELOW² − 1).
WELL_BELOW = 10.0
#: Fewest frequency points a fit accepts (2n equations for 3 parameters).
MIN_POINTS = 3
#: RMS relative misfit above which the series equivalent is reported as a poor description.
POOR_FIT_RMS = 0.05
PARAMS = ("rs_ohm", "ls_h", "cs_f")


def _complex_1d(name: str, value: Any) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=complex)
    except (TypeError, ValueError):
        raise PhysicsInputError(f"{name} is not a sequence of numbers") from None
    if arr.ndim != 1:
        raise PhysicsInputError(f"{name} must be one-dimensional, got shape {arr.shape}")
    bad = np.flatnonzero(~np.isfinite(arr))
    if bad.size:
        raise PhysicsInputError(f"{name} holds {arr[bad[0]]} at index {bad[0]}; it must be finite")
    return arr


def _frequencies(frequency_hz: Any) -> np.ndarray:
    try:
        f = np.asarray(frequency_hz, dtype=float)
    except (TypeError, ValueError):
        raise PhysicsInputError("frequency_hz is not a sequence of numbers") from None
    if f.ndim != 1:
        raise PhysicsInputError(f"frequency_hz must be one-dimensional, got shape {f.shape}")
    bad = np.flatnonzero(~(np.isfinite(f) & (f > 0)))
    if bad.size:
        raise PhysicsInputError(
            f"frequency_hz must be positive and finite; index {bad[0]} holds {f[bad[0]]}"
        )
    return f


def s11_to_z(s11: Any, z0_ohm: float = 50.0) -> np.ndarray:
    """Impedance of a one-port from its reflection coefficient, Z = Z0·(1 + S11)/(1 − S11).

    Parameters
    ----------
    s11 : array_like of complex, shape (n,) or scalar
        Reflection coefficient [1].
    z0_ohm : float
        Reference impedance [ohm], > 0.

    Returns
    -------
    ndarray of complex, shape of ``s11``
        Impedance [ohm].

    Raises
    ------
    PhysicsInputError
        Z0 not positive, or S11 = 1 (an ideal open: Z is infinite).
    """
    if not (math.isfinite(z0_ohm) and z0_ohm > 0):
        raise PhysicsInputError(f"z0_ohm must be positive, got {z0_ohm}")
    s = np.asarray(s11, dtype=complex)
    den = 1.0 - s
    if np.any(den == 0):
        raise PhysicsInputError("S11 = 1 (an ideal open) has no finite impedance")
    return z0_ohm * (1.0 + s) / den


def z_to_s11(z_ohm: Any, z0_ohm: float = 50.0) -> np.ndarray:
    """Reflection coefficient of an impedance, S11 = (Z − Z0)/(Z + Z0).

    Parameters
    ----------
    z_ohm : array_like of complex, shape (n,) or scalar
        Impedance [ohm].
    z0_ohm : float
        Reference impedance [ohm], > 0.

    Returns
    -------
    ndarray of complex, shape of ``z_ohm``
        S11 [1].
    """
    if not (math.isfinite(z0_ohm) and z0_ohm > 0):
        raise PhysicsInputError(f"z0_ohm must be positive, got {z0_ohm}")
    z = np.asarray(z_ohm, dtype=complex)
    if np.any(z == -z0_ohm):
        raise PhysicsInputError("Z = −Z0 has no finite reflection coefficient")
    return (z - z0_ohm) / (z + z0_ohm)


def series_rlc_impedance(frequency_hz: Any, rs_ohm: float, ls_h: float, cs_f: float) -> np.ndarray:
    """Impedance of a series R–L–C, Z = Rs + j(2πf·Ls − 1/(2πf·Cs)).

    Parameters
    ----------
    frequency_hz : array_like, shape (n,)
        Test frequency [Hz], > 0.
    rs_ohm, ls_h, cs_f : float
        Series resistance [ohm], inductance [H] and capacitance [F] (``inf`` for none).

    Returns
    -------
    ndarray of complex, shape (n,)
        Impedance [ohm].
    """
    w = 2.0 * np.pi * _frequencies(np.atleast_1d(frequency_hz))
    return rs_ohm + 1j * (w * ls_h - 1.0 / (w * cs_f))


def self_resonant_frequency(ls_h: float, cs_f: float) -> float:
    """Self-resonant frequency f₀ = 1/(2π√(Ls·Cs)) [Hz]; ``inf`` when Ls = 0.

    Parameters
    ----------
    ls_h : float
        Series inductance [H], ≥ 0.
    cs_f : float
        Series capacitance [F], > 0.
    """
    if not (ls_h >= 0 and cs_f > 0):
        raise PhysicsInputError(f"need ls_h ≥ 0 and cs_f > 0, got {ls_h} H and {cs_f} F")
    product = ls_h * cs_f
    return math.inf if product == 0 else 1.0 / (2.0 * math.pi * math.sqrt(product))


def quality_factor(z_ohm: Any) -> np.ndarray:
    """Q = |X|/R of each impedance point [1], shape of ``z_ohm``.

    ``inf`` where R = 0 (no measurable loss), NaN where R < 0 (not a passive reading).
    """
    z = np.asarray(z_ohm, dtype=complex)
    r, x = z.real, np.abs(z.imag)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = np.where(r > 0, x / np.where(r > 0, r, 1.0), np.where(r == 0, np.inf, np.nan))
    return q


def effective_capacitance(frequency_hz: Any, z_ohm: Any) -> np.ndarray:
    """Ceff = −1/(2πf·X) [F] where the reactance X < 0; NaN where the part is inductive.

    Parameters
    ----------
    frequency_hz : array_like, shape (n,)
        Test frequency [Hz].
    z_ohm : array_like of complex, shape (n,)
        Impedance [ohm].

    Returns
    -------
    ndarray, shape (n,)
        Effective capacitance [F].
    """
    f = _frequencies(np.atleast_1d(frequency_hz))
    x = np.atleast_1d(np.asarray(z_ohm, dtype=complex)).imag
    if x.shape != f.shape:
        raise PhysicsInputError(f"z_ohm has shape {x.shape}; it must match frequency_hz {f.shape}")
    out = np.full(f.shape, np.nan)
    cap = x < 0
    out[cap] = -1.0 / (2.0 * np.pi * f[cap] * x[cap])
    return out


def esr_at(frequency_hz: Any, z_ohm: Any, at_hz: float) -> float:
    """Measured series resistance Re Z [ohm] at ``at_hz``, linear in log f between points.

    Parameters
    ----------
    frequency_hz : array_like, shape (n,)
        Measured frequencies [Hz], strictly increasing.
    z_ohm : array_like of complex, shape (n,)
        Measured impedance [ohm].
    at_hz : float
        Where to read the ESR [Hz], inside the measured range.
    """
    f = _frequencies(frequency_hz)
    z = _complex_1d("z_ohm", z_ohm)
    if z.shape != f.shape:
        raise PhysicsInputError(f"z_ohm has shape {z.shape}; it must match frequency_hz {f.shape}")
    if np.any(np.diff(f) <= 0):
        raise PhysicsInputError("frequency_hz must rise strictly")
    if not (f[0] <= at_hz <= f[-1]):
        raise PhysicsInputError(
            f"at_hz = {at_hz:g} Hz is outside the measured {f[0]:g} Hz to {f[-1]:g} Hz"
        )
    return float(np.interp(math.log(at_hz), np.log(f), z.real))


@dataclass(frozen=True)
class SeriesRLCFit:
    """A fitted series R–L–C equivalent of one impedance sweep (SI).

    Attributes
    ----------
    rs_ohm, ls_h, cs_f : float
        Series resistance [ohm], inductance [H], capacitance [F].
    stderr : dict of str to float
        Standard errors of ``rs_ohm`` [ohm], ``ls_h`` [H], ``cs_f`` [F].
    correlation : list of list of float, shape (3, 3)
        Correlation matrix, order :data:`PARAMS`.
    rms_rel : float
        √(Σ w·|Z_model − Z|²/|Z|² / Σ w): RMS relative misfit [1].
    n_points : int
        Points with weight > 0.
    frequency_min_hz, frequency_max_hz : float
        Range of those points [Hz].
    converged : bool
        The bounded linear solver met its optimality test.
    message : str
        The solver's stop reason.
    warnings : list of str
        Reasons to distrust a figure (parameter on a bound, poor fit).
    fitter_version : str
        :data:`IMPEDANCE_FITTER_VERSION`.
    """

    rs_ohm: float
    ls_h: float
    cs_f: float
    stderr: dict[str, float]
    correlation: list[list[float]]
    rms_rel: float
    n_points: int
    frequency_min_hz: float
    frequency_max_hz: float
    converged: bool
    message: str
    warnings: list[str] = field(default_factory=list)
    fitter_version: str = IMPEDANCE_FITTER_VERSION

    @property
    def srf_hz(self) -> float:
        """Self-resonant frequency [Hz] (``inf`` when Ls is 0)."""
        return self_resonant_frequency(self.ls_h, self.cs_f)

    def impedance(self, frequency_hz: Any) -> np.ndarray:
        """Model impedance [ohm], shape (n,), at ``frequency_hz`` [Hz], shape (n,)."""
        return series_rlc_impedance(frequency_hz, self.rs_ohm, self.ls_h, self.cs_f)

    def q_at(self, frequency_hz: Any) -> np.ndarray:
        """Model Q = |ωLs − 1/(ωCs)|/Rs [1], shape (n,)."""
        return quality_factor(self.impedance(frequency_hz))

    def ceff_at(self, frequency_hz: Any) -> np.ndarray:
        """Model Ceff = Cs/(1 − ω²LsCs) [F], shape (n,); NaN at and above self-resonance."""
        f = np.atleast_1d(np.asarray(frequency_hz, dtype=float))
        return effective_capacitance(f, self.impedance(f))

    def ceff_sigma_at(self, frequency_hz: float) -> float:
        """First-order standard error of Ceff [F] at one frequency [Hz] from Ls and Cs."""
        w2 = (2.0 * math.pi * frequency_hz) ** 2
        k = 1.0 - w2 * self.ls_h * self.cs_f
        if k <= 0:
            return math.nan
        d_cs, d_ls = 1.0 / k**2, w2 * self.cs_f**2 / k**2
        s_ls, s_cs = self.stderr["ls_h"], self.stderr["cs_f"]
        rho = self.correlation[1][2]
        var = (d_cs * s_cs) ** 2 + (d_ls * s_ls) ** 2 + 2 * rho * d_cs * d_ls * s_cs * s_ls
        return math.sqrt(max(var, 0.0))

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-safe dict; non-finite numbers become ``None``."""
        return _json_safe(asdict(self))

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> SeriesRLCFit:
        """Rebuild a fit from :meth:`to_dict` output (``None`` reads back as NaN)."""
        d = dict(data)

        def num(v):
            return math.nan if v is None else float(v)

        for key in (*PARAMS, "rms_rel", "frequency_min_hz", "frequency_max_hz"):
            d[key] = num(d[key])
        d["stderr"] = {k: num(v) for k, v in d["stderr"].items()}
        d["correlation"] = [[num(v) for v in row] for row in d["correlation"]]
        d["warnings"] = list(d.get("warnings", []))
        return cls(**d)


def _json_safe(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {k: _json_safe(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [_json_safe(v) for v in obj]
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def fit_series_rlc(frequency_hz: Any, z_ohm: Any, weights: Any = None) -> SeriesRLCFit:
    """Fit Z = Rs + j(ωLs − 1/(ωCs)) to a measured impedance sweep.

    Parameters
    ----------
    frequency_hz : array_like, shape (n,)
        Test frequency [Hz], > 0, distinct.
    z_ohm : array_like of complex, shape (n,)
        Measured impedance [ohm], |Z| > 0.
    weights : array_like, shape (n,), optional
        Weights w ≥ 0 of each point's squared relative residuals (0 drops a point).

    Returns
    -------
    SeriesRLCFit
        Bounds Rs ≥ 0, Ls ≥ 0, 1/Cs ≥ 0; warnings when a bound is reached or the RMS
        relative misfit exceeds :data:`POOR_FIT_RMS`.

    Raises
    ------
    PhysicsInputError
        Shapes that do not match, non-finite values, |Z| = 0, repeated frequencies, fewer
        than :data:`MIN_POINTS` weighted points, or data with no capacitive reactance at
        all (1/Cs on its bound 0: not a capacitor).
    """
    f = _frequencies(frequency_hz)
    z = _complex_1d("z_ohm", z_ohm)
    if z.shape != f.shape:
        raise PhysicsInputError(f"z_ohm has {z.size} values but frequency_hz has {f.size}")
    w = np.ones(f.shape) if weights is None else np.asarray(weights, dtype=float)
    if w.shape != f.shape or not (np.isfinite(w).all() and (w >= 0).all()):
        raise PhysicsInputError("weights must be finite, ≥ 0 and match frequency_hz")
    used = w > 0
    f, z, w = f[used], z[used], w[used]
    if f.size < MIN_POINTS:
        raise PhysicsInputError(f"{f.size} weighted points; a fit needs at least {MIN_POINTS}")
    if np.unique(f).size != f.size:
        raise PhysicsInputError("frequency_hz repeats a value; keep one reading per frequency")
    mag = np.abs(z)
    if np.any(mag == 0):
        raise PhysicsInputError("z_ohm holds 0 Ω; a relative fit needs |Z| > 0")
    omega = 2.0 * np.pi * f
    sw = np.sqrt(w) / mag
    n = f.size
    a = np.zeros((2 * n, 3))
    a[:n, 0] = sw
    a[n:, 1] = omega * sw
    a[n:, 2] = -sw / omega
    b = np.concatenate([z.real * sw, z.imag * sw])
    # Columns span ~20 decades in SI; scale each to unit norm so the solver sees O(1) numbers.
    norms = np.linalg.norm(a, axis=0)
    an = a / norms
    res = lsq_linear(an, b, bounds=(0.0, np.inf), method="bvls", tol=1e-12)
    x = res.x / norms
    rs, ls, d = (float(v) for v in x)
    r = an @ res.x - b
    ssr = float(r @ r)
    dof = 2 * n - 3
    cov_n = np.linalg.pinv(an.T @ an) * (ssr / dof)
    cov = cov_n / np.outer(norms, norms)
    # 1/Cs on its bound, or not told from 0 at 3σ: no capacitive reactance in the data
    if d <= 0 or d < 3.0 * math.sqrt(max(cov[2, 2], 0.0)):
        raise PhysicsInputError(
            "the sweep shows no series capacitance (the reactance never falls as 1/f); "
            "this fit is for capacitors and junctions"
        )
    cs = 1.0 / d
    jac = np.diag([1.0, 1.0, -cs * cs])  # ∂(Rs, Ls, Cs)/∂(Rs, Ls, D)
    cov = jac @ cov @ jac.T
    se = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    with np.errstate(divide="ignore", invalid="ignore"):
        corr = cov / np.outer(se, se)
    corr = np.where(np.outer(se, se) > 0, corr, np.eye(3))
    rms = math.sqrt(float(ssr / w.sum()))  # r already carries √w/|Z|
    warnings = _fit_warnings(rs, ls, rms, f)
    return SeriesRLCFit(
        rs_ohm=rs,
        ls_h=ls,
        cs_f=cs,
        stderr=dict(zip(PARAMS, se.tolist(), strict=True)),
        correlation=corr.tolist(),
        rms_rel=rms,
        n_points=n,
        frequency_min_hz=float(f.min()),
        frequency_max_hz=float(f.max()),
        converged=bool(res.status > 0),
        message=str(res.message),
        warnings=warnings,
    )


def _fit_warnings(rs: float, ls: float, rms: float, f: np.ndarray) -> list[str]:
    out = []
    if ls == 0:
        out.append(
            "Ls sits on its bound 0: the sweep stays too far below self-resonance to show the "
            "inductance, so the SRF is not known"
        )
    if rs == 0:
        out.append("Rs sits on its bound 0: the loss is below what this sweep resolves")
    if rms > POOR_FIT_RMS:
        out.append(
            f"the series R–L–C equivalent misses the data by {rms:.1%} RMS between "
            f"{f.min():.3g} Hz and {f.max():.3g} Hz; Q and SRF may not describe this part"
        )
    return out
