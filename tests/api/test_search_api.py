"""search/: the search page's parameters in SI units, answered exactly as search_parts does."""

import pytest

from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

pytestmark = pytest.mark.django_db

PERSONAS = ("anonymous", "outsider", "viewer", "member", "curator", "token_read", "token_write")
READ = {"anonymous": 401, "outsider": 403}

# Junction parameters (CJO [F], VJ [V], M, CP [F]) chosen here.
STEEP = (100e-12, 0.7, 0.5, 0.0)
HYPER = (80e-12, 1.2, 0.9, 2e-12)
FLAT = (30e-12, 0.6, 0.3, 1e-12)


def junction_c(v, cjo, vj, m, cp):
    """C(V) = CJO·(1 + V/VJ)^(−M) + CP for reverse bias V ≥ 0 (depletion capacitance of an
    abrupt/graded junction; Sze, Physics of Semiconductor Devices, from memory)."""
    return cjo * (1.0 + v / vj) ** (-m) + cp


@pytest.fixture
def catalogue(stock):
    steep = stock.part("SRCH-STEEP")
    stock.lot(steep, "A", None, units=[STEEP] * 3)
    hyper = stock.part("SRCH-HYPER")
    stock.lot(hyper, "A", None, units=[HYPER] * 3)
    stock.lot(hyper, "B", None, units=[HYPER, HYPER, (70e-12, 1.2, 0.9, 2e-12)])
    flat = stock.part("SRCH-FLAT", kind="led")
    stock.lot(flat, "A", None, units=[FLAT] * 2)
    return stock


@pytest.mark.parametrize("persona", PERSONAS)
def test_every_role_may_search_but_nobody_may_post(client_for, catalogue, persona):
    client = client_for(persona)
    read = client.get("/api/v1/search/?v1_v=1&v2_v=10").status_code
    post = client.post("/api/v1/search/", {}, format="json").status_code
    assert read == READ.get(persona, 200)
    # Writing is checked first (member level, and a read token may not write), then the
    # method is refused.
    want_post = {"anonymous": 401, "outsider": 403, "viewer": 403, "token_read": 403}
    assert post == want_post.get(persona, 405)


@pytest.mark.parametrize(
    "query, kwargs",
    [
        ("v1_v=1&v2_v=10", dict(v1_v=1.0, v2_v=10.0)),
        ("", {}),  # each part's own reference window
        (
            "v1_v=0.5&v2_v=8&sort=cap_low&c_at=v2",
            dict(v1_v=0.5, v2_v=8.0, sort="cap_low", c_at="v2"),
        ),
        (
            "v1_v=1&v2_v=10&min_swing=2&kind=varactor",
            dict(v1_v=1.0, v2_v=10.0, min_swing=2.0, kind="varactor"),
        ),
        (
            "v1_v=1&v2_v=10&c_min_f=3e-11&c_max_f=6e-11",
            dict(v1_v=1.0, v2_v=10.0, c_min_f=3e-11, c_max_f=6e-11),
        ),
        ("text=hyper&lots=latest", dict(text="hyper", lots="latest")),
    ],
)
def test_the_api_answers_what_search_parts_answers(client_for, catalogue, query, kwargs):
    body = client_for("viewer").get("/api/v1/search/?" + query).json()
    direct = search_parts(SearchQuery(**kwargs))
    got = [
        (h["part"], h["swing_median"], h["swing_worst"], h["worst_lot"], h["c1_f"], h["c2_f"])
        for h in body["results"]
    ]
    want = [
        (h.part_number, h.swing_median, h.swing_worst, h.worst_lot, h.c1_f, h.c2_f)
        for h in direct.hits
    ]
    assert want  # every case finds something to compare
    assert got == want  # JSON floats round-trip exactly
    assert (body["count"], body["page"], body["n_pages"]) == (
        direct.total,
        direct.page,
        direct.n_pages,
    )
    assert body["warnings"] == list(direct.warnings)


def test_a_swing_and_capacitances_match_the_junction_formula(client_for, catalogue):
    body = client_for("viewer").get("/api/v1/search/?v1_v=1&v2_v=10&text=STEEP").json()
    (hit,) = body["results"]
    # By hand: C(1 V) = 100 pF/√(1 + 1/0.7) = 64.17 pF, C(10 V) = 100 pF/√(1 + 10/0.7)
    # = 25.54 pF, swing 2.513.
    c1, c2 = junction_c(1.0, *STEEP), junction_c(10.0, *STEEP)
    assert c1 == pytest.approx(64.17e-12, rel=1e-3) and c2 == pytest.approx(25.54e-12, rel=1e-3)
    assert hit["c1_f"] == pytest.approx(c1, rel=1e-9)
    assert hit["c2_f"] == pytest.approx(c2, rel=1e-9)
    assert hit["swing_median"] == pytest.approx(c1 / c2, rel=1e-9)
    assert (hit["v1_v"], hit["v2_v"], hit["kind"], hit["n_lots"], hit["n_units"]) == (
        1.0,
        10.0,
        "varactor",
        1,
        3,
    )
    (lot,) = hit["lots"]
    assert lot["params"] == pytest.approx({"cjo": 100e-12, "vj": 0.7, "m": 0.5, "cp": 0.0})
    assert lot["swing"] == pytest.approx(c1 / c2, rel=1e-9) and lot["extrapolated"] is False
    assert hit["units"]["n_units"] == 3 and hit["open_flags"] == 0


def test_the_worst_unit_and_lot_of_a_part_are_named(client_for, catalogue):
    body = client_for("viewer").get("/api/v1/search/?v1_v=1&v2_v=10&min_swing=2&text=HYPER").json()
    (hit,) = body["results"]
    swing = junction_c(1.0, *HYPER) / junction_c(10.0, *HYPER)
    weak = (70e-12, 1.2, 0.9, 2e-12)
    weak_swing = junction_c(1.0, *weak) / junction_c(10.0, *weak)
    assert weak_swing < swing  # the package capacitance weighs more on a smaller junction
    assert hit["swing_worst"] == pytest.approx(swing, rel=1e-9)  # lot medians: both HYPER
    assert hit["units"]["worst_swing"] == pytest.approx(weak_swing, rel=1e-9)
    assert "B" in hit["units"]["worst"] and "U03" in hit["units"]["worst"]
    assert (hit["units"]["n_units"], hit["units"]["n_meeting"]) == (6, 6)


def test_extrapolated_lots_are_left_out_with_a_warning_or_marked(client_for, stock):
    part = stock.part("SRCH-NARROW")
    stock.lot(part, "A", None, units=[STEEP] * 2, measured=(0.0, 5.0))
    client = client_for("viewer")
    left_out = client.get("/api/v1/search/?v1_v=1&v2_v=10").json()
    assert left_out["results"] == [] and "extrapolated" in left_out["warnings"][0]
    marked = client.get("/api/v1/search/?v1_v=1&v2_v=10&include_extrapolated=true").json()
    (hit,) = marked["results"]
    assert hit["n_extrapolated"] == 1 and hit["lots"][0]["extrapolated"] is True


def test_pages_link_to_each_other(client_for, catalogue):
    client = client_for("viewer")
    first = client.get("/api/v1/search/?v1_v=1&v2_v=10&per_page=2").json()
    assert (first["count"], first["n_pages"], first["per_page"]) == (3, 2, 2)
    assert first["previous"] is None and "page=2" in first["next"]
    second = client.get(first["next"]).json()
    assert second["next"] is None and len(second["results"]) == 1
    seen = [h["part"] for h in first["results"] + second["results"]]
    assert sorted(seen) == ["SRCH-FLAT", "SRCH-HYPER", "SRCH-STEEP"]
    assert second["query"]["page"] == 2 and second["query"]["v1_v"] == 1.0


@pytest.mark.parametrize(
    "query, fields",
    [
        ("v1_v=abc&v2_v=10", {"v1_v"}),
        ("v1_v=1e400&v2_v=10", {"v1_v"}),
        ("v1_v=nan&v2_v=10", {"v1_v"}),
        ("v1_v=1", {"v2_v"}),  # one end of the window only
        ("v1_v=-1&v2_v=10", {"v1_v"}),  # forward bias
        ("v1_v=10&v2_v=1", {"v2_v"}),
        ("kind=valve", {"kind"}),
        ("illumination=moonlight", {"illumination"}),
        ("sort=price", {"sort"}),
        ("lots=since", {"since"}),
        ("since=yesterday&lots=since", {"since"}),
        ("c_min_f=abc&page=0&per_page=1000", {"c_min_f", "page", "per_page"}),
        ("c_min_f=6e-11&c_max_f=3e-11", {"c_max_f"}),
        ("min_swing=0", {"min_swing"}),
        ("min_units=" + "9" * 30, {"min_units"}),
        ("temp_min_c=40&temp_max_c=30", {"temp_max_c"}),
        ("text=" + "x" * 101, {"text"}),
        ("text=a%00b", {"text"}),
    ],
)
def test_malformed_parameters_are_refused_naming_each(
    client_for, catalogue, errors_of, query, fields
):
    response = client_for("viewer").get("/api/v1/search/?" + query)
    assert response.status_code == 400
    assert set(errors_of(response)) == fields
