"""An exported card, loaded into ngspice, reproduces the fit's C(V) within 0.5 %.

Reference: ngspice's diode depletion capacitance, read with the AC-analysis recipe of
REFERENCES.md (ngspice section); the acceptance bound of 0.5 % is the API contract's.
"""

import shutil

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.measurements.services import SweepContext, record_points
from labdb.physics import capacitance_of, junction_capacitance

pytestmark = [
    pytest.mark.ngspice,
    pytest.mark.django_db,
    pytest.mark.skipif(
        shutil.which("ngspice") is None,
        reason="ngspice is not installed (apt-get install ngspice): SPICE export check skipped",
    ),
]

BIASES = [0.5, 4.0, 15.0]  # three reverse biases inside the fitted range [V]
RTOL = 5e-3  # the contract's 0.5 %


def _fit_of(bench, unit, cjo, vj, m, cp=0.0, model="auto"):
    v = np.linspace(0.0, 20.0, 41)
    c = junction_capacitance(v, cjo, vj, m, cp=cp)
    c = c * (1 + 0.002 * np.random.default_rng(7).standard_normal(v.size))
    ctx = SweepContext(part="TST-V1", lot="L1", unit=unit, fixture="meter A", model=model)
    (out,) = record_points(ctx, v.tolist(), capacitance_f=c.tolist())
    assert out.status == "stored", out.problems
    return out.fit


def _card(client_for, fit) -> str:
    response = client_for("token_read").get(f"/api/v1/fits/{fit.pk}/spice")
    assert response.status_code == 200
    return response.content.decode()


def test_a_junction_card_reproduces_the_fit_in_ngspice(client_for, bench, ngspice_cv, parse_card):
    fit = _fit_of(bench, "N1", 47e-12, 0.8, 0.55, model="junction")
    card = _card(client_for, fit)
    name, _ = parse_card(card)
    v, c, _ = ngspice_cv(card, f"d1 0 k {name}", BIASES)
    assert_allclose(v, BIASES, rtol=0, atol=1e-12)
    assert_allclose(c, capacitance_of(fit.params, v), rtol=RTOL)


def test_the_suggested_package_capacitor_completes_a_junction_plus_cp_card(
    client_for, bench, ngspice_cv, parse_card
):
    fit = _fit_of(bench, "N2", 20e-12, 0.7, 0.5, cp=3e-12, model="junction+cp")
    assert fit.model == "junction+cp" and fit.cp > 0
    card = _card(client_for, fit)
    name, _ = parse_card(card)
    (suggested,) = [ln for ln in card.splitlines() if ln.startswith(f"* CP_{name} ")]
    cap_line = suggested[2:].replace("<anode>", "0").replace("<cathode>", "k")
    v, c, _ = ngspice_cv(card, f"d1 0 k {name}\n{cap_line}", BIASES)
    assert_allclose(c, capacitance_of(fit.params, v), rtol=RTOL)


def test_a_hyperabrupt_card_works_through_the_suggested_capacitor(
    client_for, bench, ngspice_cv, parse_card
):
    # ngspice clamps a diode's M to 0.9 (REFERENCES.md); the card says so and offers a
    # voltage-dependent capacitor that follows the fitted curve.
    fit = _fit_of(bench, "N3", 100e-12, 1.2, 1.4, model="junction")
    assert fit.m > 0.9
    card = _card(client_for, fit)
    name, _ = parse_card(card)
    (suggested,) = [ln for ln in card.splitlines() if ln.startswith(f"* C_{name} ")]
    cap_line = suggested[2:].replace("<cathode>", "k").replace("<anode>", "0")
    v, c, _ = ngspice_cv(card, cap_line, BIASES)
    assert_allclose(c, capacitance_of(fit.params, v), rtol=RTOL)
    # And the diode itself really is clamped: it does not follow the fit.
    _, c_diode, _ = ngspice_cv(card, f"d1 0 k {name}", BIASES)
    assert not np.allclose(c_diode, capacitance_of(fit.params, v), rtol=RTOL, atol=0)
