"""Browser tests: Debian's Chromium driven by Playwright against a live server with demo data.

Skipped unless LABDB_BROWSER_TESTS=1 (``make browser``, and .ci/run's browser pass), so
``make test`` needs no browser. Never downloads a browser: it launches the system one.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
SHOTS = ROOT / "screenshots"  # git-ignored
PASSWORD = "browser-pass-1"
CHROMIUM_ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]
ENABLED = os.environ.get("LABDB_BROWSER_TESTS") == "1"
# Playwright's sync API keeps an event loop on the test thread; Django then refuses ORM
# calls there unless told this is safe, which it is: nothing here runs concurrently.
os.environ.setdefault("DJANGO_ALLOW_ASYNC_UNSAFE", "true")


def pytest_collection_modifyitems(config, items):
    here = Path(__file__).parent
    skip = pytest.mark.skip(
        reason="browser tests run only with LABDB_BROWSER_TESTS=1 (`make browser`; they "
        "drive Debian's chromium through Playwright)"
    )
    for item in items:
        if Path(str(item.fspath)).is_relative_to(here):
            item.add_marker(pytest.mark.browser)
            if not ENABLED:
                item.add_marker(skip)


def chromium_path() -> str:
    path = os.environ.get("LABDB_CHROMIUM") or shutil.which("chromium") or "/usr/bin/chromium"
    if not Path(path).exists():
        pytest.fail("no chromium: `apt-get install -y chromium` (make browser does it)")
    return path


@pytest.fixture(scope="session")
def demo_media(tmp_path_factory):
    return tmp_path_factory.mktemp("browser-media")


@pytest.fixture(autouse=True)
def _isolated_media(settings, demo_media):
    # Replaces the suite-wide fixture: the demo's raw files live in one session folder.
    settings.MEDIA_ROOT = demo_media
    settings.STORAGES = {
        "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
        "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"},
    }
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


@pytest.fixture(scope="session")
def demo_db(django_db_setup, django_db_blocker, demo_media):
    """The demo lab seeded once into the test database, plus one user per role.

    Live-server tests are transactional (the database is emptied after each); they use
    ``serialized_rollback`` and this fixture re-serializes the seeded database so every
    test starts from the same demo lab without seeding again.
    """
    if not ENABLED:
        return
    from django.contrib.auth.models import Group, User
    from django.core.management import call_command
    from django.db import connection
    from django.test.utils import override_settings

    with (
        django_db_blocker.unblock(),
        override_settings(
            MEDIA_ROOT=demo_media,
            PASSWORD_HASHERS=["django.contrib.auth.hashers.MD5PasswordHasher"],
        ),
    ):
        call_command("seed_demo", "--no-users", verbosity=0)
        for name, role in (("vera", "viewer"), ("milo", "member"), ("cora", "curator")):
            user = User.objects.create_user(name, password=PASSWORD)
            user.groups.add(Group.objects.get(name=role))
        connection._test_serialized_contents = connection.creation.serialize_db_to_string()


@pytest.fixture(scope="session")
def browser_context(tmp_path_factory):
    """One headless Chromium with a fresh profile folder for the whole run."""
    if not ENABLED:
        pytest.skip("LABDB_BROWSER_TESTS is not 1")
    from playwright.sync_api import sync_playwright

    profile = tempfile.mkdtemp(prefix="labdb-chromium-")
    with sync_playwright() as pw:
        context = pw.chromium.launch_persistent_context(
            profile,
            executable_path=chromium_path(),
            headless=True,
            args=CHROMIUM_ARGS,
            viewport={"width": 1280, "height": 900},
        )
        yield context
        context.close()
    shutil.rmtree(profile, ignore_errors=True)


@pytest.fixture
def page(browser_context, live_server, demo_db):
    """A fresh tab with no cookies. Fails the test on a JavaScript dialog or console error
    (an XSS alert, a script blocked by the content security policy, a broken chart)."""
    browser_context.clear_cookies()
    tab = browser_context.new_page()
    problems: list[str] = []
    tab.on("dialog", lambda d: (problems.append(f"dialog: {d.message}"), d.dismiss()))
    tab.on("console", lambda m: _console(m, problems))
    tab.on("response", lambda r: _failed_load(r, problems))
    tab.on("pageerror", lambda e: problems.append(f"page error: {e}"))
    tab.base = live_server.url
    yield tab
    tab.close()
    assert problems == [], problems


def _console(message, problems: list[str]) -> None:
    # A failed load is reported with its address by _failed_load; the rest is a real error.
    if message.type == "error" and not message.text.startswith("Failed to load resource"):
        problems.append(f"console error: {message.text}")


def _failed_load(response, problems: list[str]) -> None:
    # Browsers ask for /favicon.ico by themselves; labdb has none and needs none.
    if response.status >= 400 and not response.url.endswith("/favicon.ico"):
        problems.append(f"{response.status} {response.url}")


@pytest.fixture
def login():
    def as_user(page, username: str) -> None:
        page.goto(page.base + "/accounts/login/")
        page.fill("#id_username", username)
        page.fill("#id_password", PASSWORD)
        page.click("button[type=submit]")
        page.wait_for_selector("nav[aria-label=Main]")

    return as_user


@pytest.fixture
def shot():
    """``shot(page, name)``: a full-page screenshot in screenshots/<name>.png."""

    def take(page, name: str) -> Path:
        SHOTS.mkdir(exist_ok=True)
        path = SHOTS / f"{name}.png"
        page.screenshot(path=str(path), full_page=True)
        return path

    return take


UNLABELLED_JS = """
() => [...document.querySelectorAll('input, select, textarea')]
  .filter(el => !['hidden', 'submit', 'button', 'reset', 'image'].includes(el.type))
  .filter(el => {
    const byFor = el.id && document.querySelector(`label[for="${CSS.escape(el.id)}"]`);
    const wrapped = el.closest('label');
    const aria = (el.getAttribute('aria-label') || '').trim();
    const by = el.getAttribute('aria-labelledby');
    const byOk = by && by.split(/\\s+/).every(id => document.getElementById(id));
    return !(byFor || wrapped || aria || byOk);
  })
  .map(el => `${el.tagName.toLowerCase()} name=${el.name} id=${el.id}`)
"""

CHARTS_WITHOUT_ALT_JS = """
() => [...document.querySelectorAll('[data-chart], .js-plotly-plot, svg.thumb')]
  .filter(el => !(el.getAttribute('role') === 'img' && (el.getAttribute('aria-label') || '').trim()))
  .map(el => el.id || el.className)
"""

FOCUS_JS = """
() => { const el = document.activeElement;
  return el ? `${el.tagName.toLowerCase()}|${el.id}|${el.name || ''}|${el.textContent.trim().slice(0, 40)}` : ''; }
"""


@pytest.fixture
def accessible():
    """``accessible(page, submit=None)``: the accessibility basics of the page shown.

    Every form control has a label (label[for], a wrapping label, aria-label or
    aria-labelledby); every chart is role=img with a text alternative; Tab moves focus
    through the page and, when ``submit`` (a selector) is given, reaches that button.
    """

    def check(page, submit: str | None = None, max_tabs: int = 80) -> None:
        assert page.evaluate(UNLABELLED_JS) == [], f"unlabelled controls on {page.url}"
        assert page.evaluate(CHARTS_WITHOUT_ALT_JS) == [], f"charts without alt on {page.url}"
        target = None
        if submit:
            target = page.eval_on_selector(
                submit,
                "el => `${el.tagName.toLowerCase()}|${el.id}|${el.name || ''}|"
                "${el.textContent.trim().slice(0, 40)}`",
            )
        page.evaluate("() => { document.activeElement && document.activeElement.blur(); }")
        seen = []
        for _ in range(max_tabs):
            page.keyboard.press("Tab")
            seen.append(page.evaluate(FOCUS_JS))
            if target is not None and seen[-1] == target:
                break
        assert len(set(seen)) >= 2, f"Tab does not move focus on {page.url}: {seen[:5]}"
        if target is not None:
            assert target in seen, f"Tab never reaches {submit} on {page.url}"

    return check


@pytest.fixture
def traces():
    """``traces(page, selector)``: how many traces Plotly drew in the chart element."""

    def count(page, selector: str) -> int:
        page.wait_for_function(
            "s => { const el = document.querySelector(s); return el && el.data; }",
            arg=selector,
            timeout=15000,
        )
        return page.eval_on_selector(selector, "el => el.data && el.data.length")

    return count
