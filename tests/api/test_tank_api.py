"""tank/: the tank page's parameters in SI units; coverage claims hold under Thomson's formula."""

import math

import numpy as np
import pytest

from labdb.physics import tank_frequency
from labdb.search.queries import TankQuery
from labdb.search.services import find_tanks

pytestmark = pytest.mark.django_db

PERSONAS = ("anonymous", "outsider", "viewer", "member", "curator", "token_read", "token_write")
READ = {"anonymous": 401, "outsider": 403}

GOOD = (100e-12, 0.7, 0.5, 0.0)  # CJO [F], VJ [V], M, CP [F], chosen here
WEAK = (60e-12, 0.7, 0.5, 0.0)  # less capacitance: tunes higher, misses the band's low edge
TANK = dict(
    inductance_h=10e-6,
    fixed_f=20e-12,
    f_low_hz=5.5e6,
    f_high_hz=7.0e6,
    bias_min_v=0.5,
    bias_max_v=10.0,
)
QUERY = "&".join(f"{k}={v!r}" for k, v in TANK.items())


def params(p):
    return dict(zip(("cjo", "vj", "m", "cp"), p, strict=True))


@pytest.fixture
def tanks(stock):
    stock.lot(stock.part("TK-GOOD"), "A", None, units=[GOOD, GOOD, GOOD, GOOD, WEAK])
    stock.lot(stock.part("TK-WEAK"), "A", None, units=[WEAK] * 2)
    return stock


@pytest.mark.parametrize("persona", PERSONAS)
def test_every_role_may_ask_the_tank_finder(client_for, tanks, persona):
    response = client_for(persona).get("/api/v1/tank/?" + QUERY)
    assert response.status_code == READ.get(persona, 200)


def test_coverage_claims_hold_at_the_reported_biases(client_for, tanks):
    body = client_for("viewer").get("/api/v1/tank/?" + QUERY).json()
    good = next(c for c in body["candidates"] if c["part"] == "TK-GOOD")
    (lot,) = good["lots"]
    cov = lot["coverage"]
    args = (params(GOOD), 10e-6, 20e-12)
    assert cov["covers"] is True
    # Thomson's formula f = 1/(2π√(L·C)) via labdb.physics.tank_frequency: the reported
    # biases put the median unit's tank on the band's edges.
    assert tank_frequency(cov["bias_low_v"], *args) == pytest.approx(5.5e6, rel=1e-9)
    assert tank_frequency(cov["bias_high_v"], *args) == pytest.approx(7.0e6, rel=1e-9)
    f_ends = tank_frequency(np.array([0.5, 10.0]), *args)
    assert (cov["f_min_hz"], cov["f_max_hz"]) == pytest.approx(tuple(f_ends), rel=1e-12)
    # By hand: C(0.5 V) = 100 pF/√(1 + 0.5/0.7) = 76.376 pF; with 20 pF fixed,
    # f = 1/(2π√(10 µH · 96.376 pF)) = 5.1267 MHz.
    assert cov["f_min_hz"] == pytest.approx(5.1267e6, rel=2e-5)
    assert cov["centre_hz"] == pytest.approx(math.sqrt(5.5e6 * 7.0e6), rel=1e-12)
    assert lot["margin"] == pytest.approx(min(5.5e6 / f_ends[0], f_ends[1] / 7.0e6), rel=1e-12)
    # The slope is the derivative of the tank frequency at the centre's bias (central
    # difference, error O(h²)).
    from labdb.physics import bias_for_frequency

    v = bias_for_frequency(cov["centre_hz"], *args, window_v=(0.5, 10.0))
    h = 1e-4
    numeric = (tank_frequency(v + h, *args) - tank_frequency(v - h, *args)) / (2 * h)
    assert cov["slope_at_centre_hz_per_v"] == pytest.approx(float(numeric), rel=1e-6)


def test_the_weak_unit_is_named_and_counted_out(client_for, tanks):
    body = client_for("viewer").get("/api/v1/tank/?" + QUERY).json()
    good = next(c for c in body["candidates"] if c["part"] == "TK-GOOD")
    (lot,) = good["lots"]
    assert (lot["n_covering"], lot["n_units"], lot["fraction_covering"]) == (4, 5, 0.8)
    assert lot["worst"] == "unit U05"
    fa, fb = tank_frequency(np.array([0.5, 10.0]), params(WEAK), 10e-6, 20e-12)
    assert fa > 5.5e6  # the weak unit starts above the band: it does not cover
    assert lot["worst_f_hz"] == pytest.approx([fa, fb], rel=1e-12)
    assert good["worst_unit"]["unit"] == "unit U05" and good["worst_unit"]["lot"] == "A"
    assert (good["n_units_covering"], good["n_units"]) == (4, 5)
    weak = next(c for c in body["candidates"] if c["part"] == "TK-WEAK")
    assert weak["lots"][0]["coverage"]["covers"] is False and weak["n_lots_covering"] == 0


def test_the_api_answers_what_find_tanks_answers(client_for, tanks):
    body = client_for("viewer").get("/api/v1/tank/?" + QUERY).json()
    direct = find_tanks(TankQuery(**TANK))
    assert [c["part"] for c in body["candidates"]] == [c.part_number for c in direct.candidates]
    assert (body["n_parts"], body["n_lots"], body["n_parts_covering"]) == (
        direct.n_parts,
        direct.n_lots,
        direct.n_parts_covering,
    )
    s = body["suggestion"]
    assert (s["part"], s["lot_code"], s["fixed_f"], s["reason"]) == (
        direct.suggestion.part_number,
        direct.suggestion.lot_code,
        direct.suggestion.fixed_f,
        direct.suggestion.reason,
    )
    assert body["refusal"] == "" and body["warnings"] == list(direct.warnings)
    # The suggested fixed capacitance centres the tuning range on the band: the geometric
    # mean of f(bias_min) and f(bias_max) from Thomson's formula is √(f_low·f_high).
    assert s["part"] == "TK-GOOD" and s["fixed_f"] > 0
    f_ends = tank_frequency(np.array([0.5, 10.0]), params(GOOD), 10e-6, s["fixed_f"])
    assert math.sqrt(f_ends[0] * f_ends[1]) == pytest.approx(math.sqrt(5.5e6 * 7.0e6), rel=1e-9)


def test_a_band_out_of_reach_is_refused_in_words(client_for, tanks):
    # 50–60 MHz needs far less capacitance than any of these junctions with 10 µH.
    far = dict(TANK, f_low_hz=50e6, f_high_hz=60e6)
    query = "&".join(f"{k}={v!r}" for k, v in far.items())
    body = client_for("viewer").get("/api/v1/tank/?" + query).json()
    assert body["refusal"] and body["n_parts_covering"] == 0
    direct = find_tanks(TankQuery(**far))
    assert body["refusal"] == direct.refusal and "negative capacitance" in body["refusal"]
    # No fixed capacitance can centre the range this high: null, with the reason.
    assert body["suggestion"]["fixed_f"] is None
    assert body["suggestion"]["reason"] == direct.suggestion.reason != ""


def test_q_at_the_band_centre_is_reported_per_lot(client_for, tanks, monkeypatch):
    from labdb.api.views import tank as view
    from labdb.search.tank_q import LotQ

    client = client_for("viewer")
    body = client.get("/api/v1/tank/?" + QUERY).json()
    assert all(lot["q_at_centre"] is None for c in body["candidates"] for lot in c["lots"])

    asked = {}

    def fake_lot_q_at(lot_ids, frequency_hz):
        asked["f"], asked["ids"] = frequency_hz, sorted(lot_ids)
        lot = min(lot_ids)
        return {lot: LotQ(frequency_hz, 40.0, 90.0, 1.0, 9.0, "U02", 2)}

    monkeypatch.setattr(view, "lot_q_at", fake_lot_q_at)
    body = client.get("/api/v1/tank/?" + QUERY).json()
    lots = {lot["lot"]: lot for c in body["candidates"] for lot in c["lots"]}
    assert asked["f"] == pytest.approx(math.sqrt(5.5e6 * 7.0e6), rel=1e-12)
    assert asked["ids"] == sorted(lots)
    q = lots[min(lots)]["q_at_centre"]
    assert (q["q_min"], q["q_max"], q["unit"], q["n_units"]) == (40.0, 90.0, "U02", 2)
    assert lots[max(lots)]["q_at_centre"] is None


@pytest.mark.parametrize(
    "change, fields",
    [
        ({"inductance_h": None}, {"inductance_h"}),
        ({"inductance_h": "abc"}, {"inductance_h"}),
        ({"inductance_h": "1e400"}, {"inductance_h"}),
        ({"inductance_h": "0"}, {"inductance_h"}),
        ({"f_low_hz": "8e6"}, {"f_high_hz"}),  # band upside down
        ({"f_low_hz": None, "bias_max_v": None}, {"f_low_hz", "bias_max_v"}),
        ({"bias_min_v": "-1"}, {"bias_min_v"}),  # forward bias
        ({"bias_min_v": "12"}, {"bias_max_v"}),
        ({"coupling_f": "-1e-12"}, {"coupling_f"}),
        ({"fixed_f": "inf"}, {"fixed_f"}),
        ({"max_parts": "51"}, {"max_parts"}),
        ({"illumination": "purple"}, {"illumination"}),
    ],
)
def test_malformed_parameters_are_refused_naming_each(client_for, tanks, errors_of, change, fields):
    query = {**{k: repr(v) for k, v in TANK.items()}, **change}
    text = "&".join(f"{k}={v}" for k, v in query.items() if v is not None)
    response = client_for("viewer").get("/api/v1/tank/?" + text)
    assert response.status_code == 400
    assert set(errors_of(response)) == fields
