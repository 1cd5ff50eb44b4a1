"""Quality pages render for viewers; only curators can review flags or change part settings."""

import json
import re

import pytest

from labdb.catalog.models import Part
from labdb.quality.models import Flag, FlagState
from labdb.quality.services import recompute_part

pytestmark = pytest.mark.django_db


@pytest.fixture
def history(part, make_lot, clean_cjos):
    lots = [make_lot(f"L{k}", clean_cjos(8, seed=k)) for k in range(4)]
    odd = clean_cjos(8, seed=40)
    odd[3] *= 0.7
    lots.append(make_lot("L4", odd * 1.15))
    recompute_part(part)
    return lots


@pytest.fixture
def flag(history):
    return Flag.objects.filter(unit__isnull=False, active=True).first()


def _charts(html: str) -> list[dict]:
    return [
        json.loads(m)
        for m in re.findall(
            r'<script id="[^"]+-data" type="application/json">(.*?)</script>', html, re.S
        )
    ]


def _urls(part, lots):
    ids = "&".join(f"lots={lot.pk}" for lot in lots[-2:])
    return [
        f"/parts/{part.part_number}/",
        f"/lots/{lots[-1].pk}/",
        "/flags/",
        "/flags/?state=&current=&rule=unit_zscore",
        f"/lots/compare/?part={part.part_number}&{ids}",
    ]


def test_every_page_renders_for_a_viewer_with_titled_charts(viewer_client, part, history):
    for url in _urls(part, history):
        response = viewer_client.get(url)
        assert response.status_code == 200, url
        for fig in _charts(response.content.decode()):
            lay = fig["layout"]
            assert lay["title"]["text"], url
            axes = [v for k, v in lay.items() if re.fullmatch(r"[xy]axis\d*", k)]
            titled = [a["title"]["text"] for a in axes if a.get("title", {}).get("text")]
            # Every axis is titled with its unit in brackets, or is a ratio or a date named so.
            assert titled and all("(" in t or t.startswith(("swing", "date")) for t in titled), (
                url,
                titled,
            )


def test_the_part_page_shows_the_lots_table_and_history(viewer_client, part, history):
    html = viewer_client.get(f"/parts/{part.part_number}/").content.decode()
    assert "Lot quality" in html and "lot-history-data" in html
    assert all(lot.code in html for lot in history)


def test_the_lot_page_shows_units_with_z_scores(viewer_client, history):
    html = viewer_client.get(f"/lots/{history[-1].pk}/").content.decode()
    assert "lot-overlay-data" in html and "unit-scatter-data" in html
    assert "U04" in html and "z-score" in html


def test_a_viewer_sees_flags_but_no_review_form(viewer_client, flag):
    html = viewer_client.get("/flags/?state=&current=").content.decode()
    assert flag.summary[:30] in html and 'name="action"' not in html


@pytest.mark.parametrize("who", ["viewer_client", "member_client"])
def test_non_curators_cannot_review(request, who, flag):
    client = request.getfixturevalue(who)
    response = client.post(f"/flags/{flag.pk}/review", {"action": "acknowledge", "note": "fine"})
    assert response.status_code == 403
    flag.refresh_from_db()
    assert flag.state == FlagState.OPEN


def test_a_curator_acknowledges_with_a_note(curator_client, curator, flag):
    response = curator_client.post(
        f"/flags/{flag.pk}/review",
        {"action": "acknowledge", "note": "reel mixed at the supplier", "next": "/flags/"},
    )
    assert response.status_code == 302 and response["Location"] == "/flags/"
    flag.refresh_from_db()
    assert (flag.state, flag.reviewed_by) == (FlagState.ACKNOWLEDGED, curator)


def test_a_curator_without_a_note_is_told_and_nothing_changes(curator_client, flag):
    response = curator_client.post(
        f"/flags/{flag.pk}/review", {"action": "acknowledge", "note": ""}, follow=True
    )
    assert response.status_code == 200
    assert "needs a note" in response.content.decode()
    flag.refresh_from_db()
    assert flag.state == FlagState.OPEN


def test_review_links_from_elsewhere_are_not_followed(curator_client, flag):
    response = curator_client.post(
        f"/flags/{flag.pk}/review", {"action": "dismiss", "next": "https://elsewhere.example/"}
    )
    assert response["Location"] == "/flags/"


def test_only_curators_open_the_settings_page(viewer_client, member_client, curator_client, part):
    url = f"/parts/{part.part_number}/quality-settings/"
    assert viewer_client.get(url).status_code == 403
    assert member_client.get(url).status_code == 403
    assert curator_client.get(url).status_code == 200


def test_a_curator_sets_spec_limits_and_lots_are_rejudged(curator_client, part, history):
    url = f"/parts/{part.part_number}/quality-settings/"
    form = {
        "ref_bias_low_v": "0",
        "ref_bias_high_v": "8",
        "spec_bias_v": "4",
        "spec_c_min_pf": "19",
        "spec_c_max_pf": "22",
        "spec_min_swing": "",
        "shift_tolerance_pct": "5",
    }
    response = curator_client.post(url, form)
    assert response.status_code == 302
    part.refresh_from_db()
    assert (part.spec_bias_v, part.spec_c_min_f, part.spec_c_max_f) == (4.0, 19e-12, 22e-12)
    assert (
        Flag.objects.filter(rule="lot_cpk").exists()
        or Flag.objects.filter(rule="unit_spec").exists()
    )


def test_settings_beyond_the_rating_are_refused_on_the_field(curator_client, part):
    url = f"/parts/{part.part_number}/quality-settings/"
    form = {"ref_bias_low_v": "0", "ref_bias_high_v": "15", "shift_tolerance_pct": "5"}
    response = curator_client.post(url, form)
    assert response.status_code == 200
    assert "beyond the part&#x27;s rated reverse voltage 10 V" in response.content.decode()
    assert Part.objects.get(pk=part.pk).ref_bias_high_v == 8.0


def test_anonymous_visitors_go_to_login_and_roleless_users_are_refused(client, outsider_client):
    assert client.get("/flags/").status_code == 302
    assert outsider_client.get("/flags/").status_code == 403
    assert outsider_client.get("/lots/compare/").status_code == 403
