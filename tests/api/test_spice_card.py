"""The SPICE card writer (pure) and fits/{id}/spice: parameters read back, comments present."""

from datetime import UTC, datetime

import pytest

from labdb.api.spice import CardSource, model_card, model_name, spice_diode_voltage

SOURCE = CardSource(
    part="BB-910",
    lot="2026-03",
    unit="U7",
    fit="fit 12: version 2 of sweep 40",
    fitter_version="fv-test",
    written_at=datetime(2026, 3, 4, 5, 6, tzinfo=UTC),
)


def test_the_model_line_reads_back_to_the_parameters(parse_card):
    params = {"cjo": 47.123456789e-12, "vj": 0.8123456789, "m": 0.5512345678}
    name, got = parse_card(model_card(params, name="BB910_U7", source=SOURCE))
    assert name == "BB910_U7"
    # Nine significant digits are written: the read-back error is below 5e-9 relative.
    assert got["CJO"] == pytest.approx(params["cjo"], rel=5e-9)
    assert got["VJ"] == pytest.approx(params["vj"], rel=5e-9)
    assert got["M"] == pytest.approx(params["m"], rel=5e-9)
    assert got["FC"] == 0.5


def test_the_header_names_part_lot_unit_fit_fitter_and_date(parse_card):
    card = model_card(
        {"cjo": 1e-11, "vj": 0.7, "m": 0.5}, name="X", source=SOURCE, bias_range_v=(0.5, 12.0)
    )
    head = [ln for ln in card.splitlines() if ln.startswith("*")]
    assert "part BB-910 lot 2026-03 unit U7" in head[0]
    assert any("fit 12: version 2 of sweep 40" in ln for ln in head)
    assert any("fv-test" in ln for ln in head)
    assert any("2026-03-04" in ln for ln in head)
    # Reverse bias 0.5–12 V is diode voltage −0.5 to −12 V: the one sign change, stated.
    assert any("reverse bias 0.5 to 12 V" in ln and "-0.5 to -12 V" in ln for ln in head)


def test_package_capacitance_is_a_comment_with_a_suggested_parallel_capacitor(parse_card):
    card = model_card({"cjo": 1e-11, "vj": 0.7, "m": 0.5, "cp": 1.5e-12}, name="X", source=SOURCE)
    _, got = parse_card(card)
    assert "CP" not in got  # not a D-model parameter
    assert "* CP_X <anode> <cathode> 1.5e-12" in card.splitlines()
    assert all(ln.startswith(("*", ".model")) for ln in card.splitlines())


def test_a_grading_coefficient_above_the_ngspice_limit_is_noted():
    card = model_card({"cjo": 1e-10, "vj": 1.2, "m": 1.5}, name="HYP", source=SOURCE)
    assert "ngspice limits a diode's M to 0.9" in card
    assert "* C_HYP <cathode> <anode> C='1e-10/(1+V(<cathode>,<anode>)/1.2)^1.5'" in card
    plain = model_card({"cjo": 1e-10, "vj": 1.2, "m": 0.9}, name="ABR", source=SOURCE)
    assert "limits" not in plain


@pytest.mark.parametrize(
    "labels, expected",
    [
        (("BB-910", "2026/03", "U7", "v2"), "BB_910_2026_03_U7_V2"),
        (("1N4148", "L1"), "D_1N4148_L1"),
        (("LED ø5", None, "typ"), "LED_5_TYP"),
    ],
)
def test_model_names_are_safe_spice_identifiers(labels, expected):
    assert model_name(*labels) == expected


@pytest.mark.parametrize(
    "params",
    [
        {"cjo": -1e-12, "vj": 0.7, "m": 0.5},
        {"cjo": 1e-12, "vj": 0.7},
        {"cjo": 1e-12, "vj": 0.7, "m": float("nan")},
    ],
)
def test_impossible_parameters_are_refused_by_name(params):
    with pytest.raises(ValueError, match="cjo|params"):
        model_card(params, name="X", source=SOURCE)


def test_the_diode_voltage_is_minus_the_reverse_bias():
    assert spice_diode_voltage(5.0) == -5.0 and spice_diode_voltage(-0.3) == 0.3


@pytest.mark.django_db
def test_fits_spice_serves_the_card_of_the_fit(client_for, stored_sweep, parse_card):
    fit = stored_sweep.current_fit
    response = client_for("token_read").get(f"/api/v1/fits/{fit.pk}/spice")
    assert response.status_code == 200
    assert response["Content-Type"].startswith("text/plain")
    card = response.content.decode()
    name, got = parse_card(card)
    assert name == "TST_V1_L1_U1_V1"
    assert (got["CJO"], got["VJ"], got["M"]) == pytest.approx((fit.cjo, fit.vj, fit.m), rel=5e-9)
    assert f"fit {fit.pk}: version 1 of sweep {stored_sweep.pk}" in card
    assert fit.fitter_version in card
