"""fit_junction agrees with scipy.optimize.curve_fit, a general-purpose reference fitter.

curve_fit (MINPACK Levenberg–Marquardt, finite-difference Jacobian) with sigma = C and
absolute_sigma=False minimises Σ((C_model − C)/C)² and reports pcov = s²·(JᵀJ)⁻¹ with
s² = SSR/(n − p): the same objective and covariance convention as fit_junction, reached by
independent code. Started from the truth, where both must land on the same interior minimum.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import curve_fit

from labdb.physics.fitting import fit_junction
from labdb.physics.junction import MODEL_PARAMS, junction_capacitance


def model_f(v, cjo, vj, m, cp=0.0):
    return junction_capacitance(v, cjo, vj, m, cp)


CASES = [
    ("junction", (100e-12, 0.7, 0.5), 0.0, 20.0, 0.003, 1),
    ("junction", (300e-12, 0.8, 0.33), 0.0, 30.0, 0.002, 2),
    ("junction", (50e-12, 1.4, 2.0), 0.0, 10.0, 0.005, 3),
    ("junction", (80e-12, 0.6, 0.5), 0.0, 10.0, 0.003, 4),
    ("junction+cp", (100e-12, 0.7, 0.5, 8e-12), -0.2, 20.0, 0.002, 5),
    ("junction+cp", (60e-12, 1.0, 1.6, 3e-12), 0.0, 8.0, 0.003, 6),
]


@pytest.mark.parametrize(("model", "truth", "v_min", "v_max", "noise", "seed"), CASES)
def test_parameters_and_standard_errors_agree_with_curve_fit(
    model, truth, v_min, v_max, noise, seed
):
    v = np.linspace(v_min, v_max, 41)
    rng = np.random.default_rng(seed)
    c = model_f(v, *truth) * (1 + noise * rng.standard_normal(v.size))
    ours = fit_junction(v, c, model=model)
    popt, pcov = curve_fit(
        model_f,
        v,
        c,
        p0=truth,
        sigma=c,
        absolute_sigma=False,
        xtol=1e-14,
        ftol=1e-14,
        maxfev=20000,
    )
    names = MODEL_PARAMS[model]
    np.testing.assert_allclose([ours.params[k] for k in names], popt, rtol=1e-6)
    # curve_fit's Jacobian is a forward difference (relative error ~1e-8); the standard
    # errors agreed to ~2e-7 here, so 1e-5 leaves room and is far inside "a few %".
    sd = np.sqrt(np.diag(pcov))
    np.testing.assert_allclose([ours.stderr[k] for k in names], sd, rtol=1e-5)
    np.testing.assert_allclose(ours.correlation, pcov / np.outer(sd, sd), atol=1e-5)
