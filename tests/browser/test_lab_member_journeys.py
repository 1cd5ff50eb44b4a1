"""What lab members do, done in a real browser against the demo lab.

Each test logs in, works the pages as a person would (typing, clicking, Tab), checks what
is drawn, checks the accessibility basics, and keeps a screenshot in screenshots/.
"""

from __future__ import annotations

from pathlib import Path

import pytest

pytestmark = pytest.mark.django_db(transaction=True, serialized_rollback=True)

DEMO = Path(__file__).resolve().parents[2] / "fixtures" / "demo" / "sweeps"


def demo_file(relative: str, unit: str) -> bytes:
    """A demo bench file relabelled as a new unit, so storing it is not a duplicate."""
    text = (DEMO / relative).read_text(encoding="utf-8")
    lines = [f"# unit: {unit}" if ln.startswith("# unit:") else ln for ln in text.splitlines()]
    return ("\n".join(lines) + "\n").encode()


def test_a_member_logs_in(page, accessible, shot):
    page.goto(page.base + "/")
    assert "/accounts/login/" in page.url  # every page asks for a login first
    accessible(page, submit="button[type=submit]")
    shot(page, "login")
    page.fill("#id_username", "milo")
    page.fill("#id_password", "wrong")
    page.click("button[type=submit]")
    assert page.locator("[role=alert]").count() == 1
    page.fill("#id_username", "milo")
    page.fill("#id_password", "browser-pass-1")
    page.click("button[type=submit]")
    page.wait_for_selector("nav[aria-label=Main]")
    assert "milo (member)" in page.inner_text("header")
    accessible(page)
    shot(page, "dashboard")


def test_uploading_a_cv_file_and_an_oscillator_sweep_with_preview_then_store(
    page, login, accessible, traces, shot, tmp_path
):
    from labdb.measurements.models import Sweep

    login(page, "milo")
    page.goto(page.base + "/upload/")
    accessible(page, submit="button[name=store]")
    cv = tmp_path / "B01_cv.csv"
    cv.write_bytes(demo_file("QSV-3052/VX26C/U01_cv_dark25C.csv", "B01"))
    fv = tmp_path / "B02_freq.csv"
    fv.write_bytes(demo_file("QSV-3052/VX26C/U02_freq_dark25C.csv", "B02"))
    page.set_input_files("#id_files", [str(cv), str(fv)])
    page.click("button[name=preview]")
    page.wait_for_selector("text=Preview (nothing stored yet)")
    # Both files parsed and fitted: each preview chart holds its own file's points and fit.
    for n, name in enumerate(("B01_cv.csv", "B02_freq.csv")):
        assert traces(page, f"#preview-{n}") == 2
        title = page.eval_on_selector(f"#preview-{n}", "el => el.layout.title.text")
        assert title == f"Preview: {name}"
    assert Sweep.objects.filter(unit__label__in=["B01", "B02"]).count() == 0
    accessible(page, submit="button[name=store]")
    shot(page, "upload-preview")

    page.click("button[name=store]")  # the staged files: nothing to choose again
    page.wait_for_selector("h1:has-text('Upload result')")
    assert "2 stored" in page.inner_text("main")
    shot(page, "upload-result")
    stored = Sweep.objects.get(unit__label="B02")
    assert stored.kind == "fv" and stored.calibration_id is not None

    page.click(f"a[href='/sweeps/{stored.pk}/']")
    page.wait_for_selector("#cv-chart")
    assert traces(page, "#cv-chart") == 2  # measured points and the fitted curve
    assert traces(page, "#resid-chart") == 1
    accessible(page)
    # The text alternative beside the chart: the points table, one row a point.
    assert page.locator("table tbody tr").count() >= stored.n_points
    shot(page, "sweep-oscillator")


def test_searching_for_a_swing_and_opening_a_result(page, login, accessible, shot):
    login(page, "vera")
    page.click("nav >> text=Search")
    page.fill("#id_v1", "1")
    page.fill("#id_v2", "4")
    page.fill("#id_min_swing", "1.2")
    accessible(page, submit="form.search-form button[type=submit]")
    page.click("form.search-form button[type=submit]")
    page.wait_for_selector("table.results")
    assert "v1=1" in page.url and "min_swing=1.2" in page.url  # the address keeps the query
    first = page.locator("table.results tbody tr td:first-child a").first
    part_number = first.inner_text()
    assert part_number in {"QSV-3052", "HOL-5R31D", "HOL-5G72H"}
    accessible(page)
    shot(page, "search-results")
    first.click()
    page.wait_for_selector(f"h1:has-text('{part_number}')")
    shot(page, "part-from-search")


def test_the_tank_finder_draws_the_shortlisted_parts(page, login, accessible, traces, shot):
    login(page, "vera")
    page.goto(page.base + "/tank/")
    # 4.7 µH with 10 pF fixed: the demo varactor tunes roughly 7–15 MHz over 0–20 V.
    page.fill("#id_l_uh", "4.7")
    page.fill("#id_c_fixed", "10")
    page.fill("#id_f_low", "9")
    page.fill("#id_f_high", "11")
    page.fill("#id_v_max", "20")
    accessible(page, submit="button:has-text('Find parts')")
    page.click("button:has-text('Find parts')")
    page.wait_for_selector("h2:has-text('Answer')")
    assert traces(page, "#tank-chart") >= 2  # the band and at least one lot's curve
    assert page.locator("table.results tbody tr").count() >= 2
    accessible(page)
    shot(page, "tank-finder")


def test_comparing_two_lots_of_a_part(page, login, accessible, traces, shot):
    login(page, "vera")
    page.goto(page.base + "/lots/compare/")
    page.select_option("#part-pick", "QSV-3052")
    page.click("button:has-text('Choose lots')")
    boxes = page.locator("input[name=lots]")
    assert boxes.count() >= 2
    boxes.nth(0).check()
    boxes.nth(1).check()
    accessible(page, submit="button:has-text('Compare')")
    page.click("button:has-text('Compare')")
    page.wait_for_selector("#compare-bands")
    assert traces(page, "#compare-bands") >= 2
    assert page.locator("table caption").first.inner_text().startswith("Against lot")
    accessible(page)
    shot(page, "lot-compare")


def test_a_curator_acknowledges_a_flag(page, login, accessible, shot):
    from labdb.quality.models import Flag

    login(page, "cora")
    page.goto(page.base + "/flags/")
    row = page.locator("table.q-flags tbody tr").first
    flag_id = int(row.get_attribute("id").removeprefix("flag-"))
    accessible(page, submit=f"#flag-{flag_id} button[value=acknowledge]")
    shot(page, "flags")
    row.locator("input[name=note]").fill("seen on the bench too; supplier told")
    row.locator("button[value=acknowledge]").click()
    page.wait_for_selector("[role=status]:has-text('acknowledged')")
    flag = Flag.objects.get(pk=flag_id)
    assert (flag.state, flag.reviewed_by.username) == ("acknowledged", "cora")
    assert flag.note == "seen on the bench too; supplier told"
    shot(page, "flag-acknowledged")


def test_minting_and_revoking_a_token(page, login, accessible, shot, live_server):
    import requests

    login(page, "milo")
    page.click("nav >> text=API tokens")
    accessible(page, submit="button:has-text('Mint token')")
    page.fill("#id_name", "bench 3 script")
    page.select_option("#id_scope", "write")
    page.click("button:has-text('Mint token')")
    key = page.inner_text("#new-key").strip()
    shot(page, "token-minted")
    api = live_server.url + "/api/v1/parts/"
    headers = {"Authorization": f"Token {key}"}
    assert requests.get(api, headers=headers, timeout=30).status_code == 200
    page.click("button:has-text('Revoke')")
    page.wait_for_selector("text=revoked")
    assert requests.get(api, headers=headers, timeout=30).status_code == 401
    accessible(page)
    shot(page, "token-revoked")
