"""Malformed query parameters (non-numbers, huge numbers, bad choices, unknown sort keys)
get a clear 4xx naming the parameter, never a server error, and write nothing."""

from __future__ import annotations

import pytest

pytestmark = pytest.mark.django_db

HUGE = "1e400"  # overflows a float to infinity
HUGE_INT = "9" * 30  # beyond any database integer


def api_cases(lab):
    s, u, lot = lab.sweep.pk, lab.unit.pk, lab.lot.pk
    return [
        # (url, status, the parameter or text the message must name)
        ("/api/v1/sweeps/?unit=abc", 400, "unit"),
        (f"/api/v1/sweeps/?unit={HUGE_INT}", 400, "unit"),
        ("/api/v1/sweeps/?temperature_min=warm", 400, "temperature_min"),
        (f"/api/v1/sweeps/?temperature_max={HUGE}", 400, "temperature_max"),
        ("/api/v1/sweeps/?measured_after=yesterday", 400, "measured_after"),
        ("/api/v1/sweeps/?kind=xyz", 400, "kind"),
        ("/api/v1/sweeps/?cursor=not-a-cursor", 404, "Invalid cursor"),
        ("/api/v1/parts/?kind=valve", 400, "kind"),
        ("/api/v1/parts/?page=abc", 404, "Invalid page"),
        (f"/api/v1/parts/?page={HUGE_INT}", 404, "Invalid page"),
        ("/api/v1/lots/?received_after=soon", 400, "received_after"),
        ("/api/v1/units/?lot=-x", 400, "lot"),
        (f"/api/v1/sweeps/{s}/fits/?version=latest", 400, "version"),
        (f"/api/v1/units/{u}/q?frequency_hz=abc", 400, "frequency_hz"),
        (f"/api/v1/units/{u}/q?frequency_hz={HUGE}", 400, "frequency_hz"),
        (f"/api/v1/lots/{lot}/spice?corner=worst", 400, "corner"),
        (f"/api/v1/sweeps/{HUGE_INT}/", 404, "No Sweep"),
        (f"/api/v1/lots/{HUGE_INT}/summary", 404, ""),
    ]


def test_the_api_names_each_malformed_parameter(lab, client_as, rows, relaxed_throttles):
    client = client_as("viewer")
    before = rows()  # after the client: logging in makes the persona's user
    wrong = []
    for url, status, named in api_cases(lab):
        response = client.get(url)
        messages = " ".join(
            f"{e.get('field', '')} {e['message']}" for e in response.json().get("errors", [])
        )
        if response.status_code != status or named not in messages:
            wrong.append(f"{url}: {response.status_code} {messages!r}")
    assert not wrong, "\n".join(wrong)
    assert rows() == before


def test_unknown_parameters_and_sort_keys_are_ignored_by_the_api_lists(lab, client_as):
    # The lists take no sort parameter: an unknown key changes nothing rather than erroring.
    client = client_as("viewer")
    plain = client.get("/api/v1/sweeps/").json()
    for query in ("?ordering=bogus", "?sort=-nope", "?unit__in=1;DROP"):
        response = client.get("/api/v1/sweeps/" + query)
        assert response.status_code == 200
        assert response.json()["results"] == plain["results"]


@pytest.mark.parametrize(
    "url",
    [
        "/sweeps/{sweep}/?version=abc",
        f"/sweeps/{HUGE_INT}/",
        f"/jobs/{HUGE_INT}/",
        "/lots/compare/?part=NO-SUCH-PART",
        f"/flags/{HUGE_INT}/review",
    ],
)
def test_pages_answer_404_for_ids_and_versions_that_do_not_exist(lab, client_as, rows, url):
    client = client_as("curator")
    before = rows()
    url = url.format(sweep=lab.sweep.pk)
    response = client.post(url, {"action": "dismiss"}) if "review" in url else client.get(url)
    assert response.status_code == 404
    assert rows() == before


SEARCH_CASES = [
    ("/search/?v1=abc&v2=5", "v1"),
    (f"/search/?v1=0&v2={HUGE}", "v2"),
    ("/search/?v1=5&v2=1", "v2"),
    ("/search/?sort=price", "sort"),
    ("/search/?page=-1", "page"),
    ("/search/?since=notadate&lots=since", "since"),
    ("/search/?kind=valve", "kind"),
    ("/tank/?l_uh=abc&f_low=1&f_high=2&v_max=3", "l_uh"),
    (f"/tank/?l_uh={HUGE}&f_low=1&f_high=2&v_max=3", "l_uh"),
    ("/tank/?l_uh=-1&f_low=1&f_high=2&v_max=3", "l_uh"),
]


@pytest.mark.parametrize(("url", "field"), SEARCH_CASES)
def test_the_search_pages_show_the_error_at_the_field_and_write_nothing(
    lab, client_as, rows, url, field
):
    client = client_as("viewer")
    before = rows()
    response = client.get(url)
    assert response.status_code < 500
    html = response.content.decode()
    if field == "page":  # a hidden field: its error is a notice above the form
        assert '<div class="notice error" role="alert">Page:' in html, url
    else:
        # The message sits right after the field's own control (web/includes/field.html).
        control = html.find(f'name="{field}"')
        assert control >= 0, f"{url}: no control named {field}"
        assert 'class="errorlist"' in html[control : control + 3000], url
    assert rows() == before


def test_a_search_page_past_the_end_is_empty_not_an_error(lab, client_as):
    response = client_as("viewer").get(f"/search/?page={HUGE_INT}")
    assert response.status_code == 200
    assert "<h2>0 parts found</h2>" in response.content.decode()


@pytest.mark.parametrize(("url", "field"), SEARCH_CASES[:3])
def test_the_search_pages_answer_400_to_a_refused_query(lab, client_as, url, field):
    assert client_as("viewer").get(url).status_code == 400
