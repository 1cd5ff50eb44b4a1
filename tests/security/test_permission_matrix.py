"""Every URL of the site and the API × every kind of caller, generated from the URL conf.

The expected answer comes from the policy table below, keyed by URL name. A URL that has
no entry fails the test, so a new view cannot be added without saying who may use it.
"""

from __future__ import annotations

from dataclasses import dataclass

import pytest
from django.urls import URLPattern, URLResolver, get_resolver, resolve, reverse

from labdb.accounts.roles import CURATOR, MEMBER, VIEWER

pytestmark = pytest.mark.django_db

PUBLIC = "public"  # no login at all
LOGIN = "login"  # any logged-in user, with or without a role

#: Least to most trusted; a persona holds every level up to its own.
LEVELS = (None, LOGIN, VIEWER, MEMBER, CURATOR)
#: The level of each persona. Tokens belong to a member.
LEVEL_OF = {
    "anonymous": None,
    "outsider": LOGIN,
    "viewer": VIEWER,
    "member": MEMBER,
    "curator": CURATOR,
    "token_read": MEMBER,
    "token_write": MEMBER,
}
METHODS = ("GET", "POST")


@dataclass(frozen=True)
class Rule:
    """Who may GET and POST one URL, and what they get.

    ``get``/``post``: the least level allowed, or None when the method is refused (405).
    ``ok_get``/``ok_post``: the status an allowed caller gets (an empty POST is sent, so a
    form view answers 200 with its errors and an API list 400). ``obj`` names the object
    of the lab fixture whose key fills the URL. ``owner``: callers below ``owner_bypass``
    who do not own the object get 404 (ids of others' things are not disclosed).
    ``denied``: what a caller below the level gets (403 by default). ``gate``: the level
    the API's permission check asks for a change before the view refuses the method.
    """

    get: str | None
    post: str | None
    ok_get: int = 200
    ok_post: int = 200
    obj: str | None = None
    owner: str | None = None
    owner_bypass: str | None = CURATOR
    denied: int = 403
    path: str | None = None
    gate: str = MEMBER


def page(get, post, **kw) -> Rule:
    return Rule(get, post, **kw)


def api(get, post, **kw) -> Rule:
    return Rule(get, post, **kw)


# fmt: off
#: Pages (session login; a token in a header does not open them).
PAGE_POLICY: dict[str, Rule] = {
    "login": page(PUBLIC, PUBLIC),  # an empty POST re-shows the form with its errors
    "logout": page(None, LOGIN, ok_post=302),
    "healthz": page(PUBLIC, None),
    "dashboard": page(VIEWER, VIEWER),
    "part-list": page(VIEWER, VIEWER),
    "part-detail": page(VIEWER, VIEWER, obj="part"),
    "part-quality-settings": page(CURATOR, CURATOR, obj="part"),
    "lot-detail": page(VIEWER, VIEWER, obj="lot"),
    "unit-detail": page(VIEWER, VIEWER, obj="unit"),
    "sweep-detail": page(VIEWER, VIEWER, obj="sweep"),
    "sweep-raw": page(VIEWER, VIEWER, obj="sweep"),
    "fit-detail": page(VIEWER, VIEWER, ok_get=302, ok_post=302, obj="fit"),
    "fixture-list": page(VIEWER, VIEWER),
    "fixture-detail": page(VIEWER, VIEWER, obj="fixture"),
    "upload": page(MEMBER, MEMBER),
    "search": page(VIEWER, VIEWER),
    "tank": page(VIEWER, VIEWER),
    "flag-list": page(VIEWER, VIEWER),
    "flag-review": page(None, CURATOR, ok_post=302, obj="flag"),
    "lot-compare": page(VIEWER, VIEWER),
    "api-tokens": page(VIEWER, VIEWER),
    "api-token-revoke": page(None, VIEWER, ok_post=302, obj="token", owner="member",
                             owner_bypass=None),
    "job-list": page(LOGIN, LOGIN),
    "job-detail": page(LOGIN, LOGIN, obj="job", owner="member"),
    "job-status": page(LOGIN, LOGIN, obj="job", owner="member"),
    "audit-list": page(CURATOR, CURATOR),
    # The admin is one site gated by AdminSite.has_permission: checked here at its index;
    # everyone else is sent to the admin's own login page.
    "admin:index": page(CURATOR, CURATOR, denied=302),
}

#: REST API (session or token; a read token may only read, whatever its owner's role).
API_POLICY: dict[str, Rule] = {
    "api:schema": api(PUBLIC, None),
    "api:docs": api(PUBLIC, None),
    "api:no-endpoint": api(PUBLIC, PUBLIC, ok_get=404, ok_post=404, path="/api/v1/no-such-thing/"),
    "api:api-root": api(VIEWER, None),
    "api:part-list": api(VIEWER, CURATOR, ok_post=400),
    "api:part-detail": api(VIEWER, None, obj="part", gate=CURATOR),  # parts: curators
    "api:lot-list": api(VIEWER, MEMBER, ok_post=400),
    "api:lot-detail": api(VIEWER, None, obj="lot"),
    # The fixture's lot has one unit and so no summary yet: 409 says so (README).
    "api:lot-summary": api(VIEWER, None, ok_get=409, obj="lot"),
    "api:lot-spice": api(VIEWER, None, ok_get=409, obj="lot"),
    "api:unit-list": api(VIEWER, MEMBER, ok_post=400),
    "api:unit-detail": api(VIEWER, None, obj="unit"),
    "api:unit-derive-cv": api(None, MEMBER, ok_post=400, obj="unit"),
    "api:unit-q": api(VIEWER, None, ok_get=400, obj="unit"),
    "api:fixture-list": api(VIEWER, MEMBER, ok_post=400),
    "api:fixture-detail": api(VIEWER, None, obj="fixture"),
    "api:calibration-list": api(VIEWER, MEMBER, ok_post=400),
    "api:calibration-detail": api(VIEWER, None, obj="calibration"),
    "api:sweep-list": api(VIEWER, MEMBER, ok_post=400),
    "api:sweep-detail": api(VIEWER, None, obj="sweep"),
    "api:sweep-raw": api(VIEWER, None, obj="sweep"),
    "api:sweep-fits": api(VIEWER, None, obj="sweep"),
    "api:sweep-impedance": api(VIEWER, None, obj="zf"),
    "api:sweep-impedance-fits": api(VIEWER, None, obj="zf"),
    "api:fit-detail": api(VIEWER, None, obj="fit"),
    "api:fit-spice": api(VIEWER, None, obj="fit"),
    "api:job-detail": api(VIEWER, None, obj="job", owner="member"),
    # Flags: everyone with a role reads; reviews (PATCH) are curators' (checked before the
    # method is refused, so a member's POST is 403 and a curator's 405).
    "api:flag-list": api(VIEWER, None, gate=CURATOR),
    "api:flag-detail": api(VIEWER, None, obj="flag", gate=CURATOR),
    "api:search": api(VIEWER, None),  # no parameters: the default search
    "api:tank": api(VIEWER, None, ok_get=400),  # no parameters: inductance and band missing
}
# fmt: on

POLICY = {**PAGE_POLICY, **API_POLICY}

#: URL namespaces left out, with the reason; nothing else may be skipped.
EXCLUDED_NAMESPACES = {
    "admin": "Django's admin: one site behind AdminSite.has_permission, checked at admin:index",
}


def walk(patterns, namespace: str = "", prefix: str = ""):
    """(name, pattern text) of every URL pattern, namespaces joined with ':'."""
    for entry in patterns:
        if isinstance(entry, URLResolver):
            ns = entry.namespace
            full = f"{namespace}:{ns}" if namespace and ns else (ns or namespace)
            if ns in EXCLUDED_NAMESPACES:
                continue
            yield from walk(entry.url_patterns, full, prefix + str(entry.pattern))
        elif isinstance(entry, URLPattern):
            if str(entry.pattern).startswith(("static/", "media/", "^static/", "^media/")):
                continue  # files, not views (only present when DEBUG serves them)
            name = f"{namespace}:{entry.name}" if namespace else entry.name
            yield name, prefix + str(entry.pattern)


URLS = list(walk(get_resolver().url_patterns))


def test_every_url_has_a_policy_and_every_policy_a_url():
    unnamed = [text for name, text in URLS if name is None or name.endswith(":None")]
    assert not unnamed, f"URL patterns without a name cannot be given a policy: {unnamed}"
    names = {name for name, _ in URLS}
    missing = sorted(names - POLICY.keys())
    assert not missing, (
        f"no access policy for {missing}: add each to PAGE_POLICY or API_POLICY in "
        f"{__file__} saying who may GET and POST it"
    )
    stale = sorted(POLICY.keys() - names - {"admin:index"})
    assert not stale, f"policy entries for URLs that no longer exist: {stale}"


def key_of(lab, obj: str) -> dict:
    target = getattr(lab, obj)
    if obj == "part":
        return {"part_number": target.part_number}
    return {"pk": target.pk}


def url_for(name: str, rule: Rule, lab) -> str:
    if rule.path:
        return rule.path
    url = reverse(name, kwargs=key_of(lab, rule.obj) if rule.obj else None)
    match = resolve(url)
    assert match.view_name == name, f"{url} resolves to {match.view_name}, not {name}"
    return url


def holds(level: str | None, need: str) -> bool:
    return level is not None and LEVELS.index(level) >= LEVELS.index(need)


def expected(name: str, rule: Rule, method: str, persona: str) -> int:
    """The status the policy promises ``persona`` for ``method`` on URL ``name``."""
    need = rule.get if method == "GET" else rule.post
    ok = rule.ok_get if method == "GET" else rule.ok_post
    level = LEVEL_OF[persona]
    is_api = name.startswith("api:")
    public = (rule.get == PUBLIC) if method == "GET" or need is None else need == PUBLIC
    if public:
        return ok if need is not None else 405
    if not is_api:
        if persona == "anonymous" or persona.startswith("token_"):
            return 302  # to the login page: pages take sessions only
        level = LEVEL_OF[persona]
        if need is None:
            return 405
        if not holds(level, need):
            return rule.denied
    else:
        if persona == "anonymous":
            return 401
        if method != "GET" and persona == "token_read":
            return 403  # scope before role
        gate = need if need is not None else (VIEWER if method == "GET" else rule.gate)
        if not holds(level, gate):
            return rule.denied
        if need is None:
            return 405
    who = "member" if persona.startswith("token_") else persona  # the tokens' owner
    if rule.owner and who != rule.owner:
        if rule.owner_bypass is None or not holds(level, rule.owner_bypass):
            return 404
    return ok


def test_every_url_answers_every_caller_as_the_policy_says(lab, client_as, relaxed_throttles):
    clients = {p: client_as(p) for p in LEVEL_OF}
    targets = [(name, POLICY[name]) for name, _ in URLS if name in POLICY]
    targets.append(("admin:index", POLICY["admin:index"]))
    wrong = []
    checked = 0
    for name, rule in targets:
        url = url_for(name, rule, lab)
        for method in METHODS:
            for persona, client in clients.items():
                response = client.get(url) if method == "GET" else client.post(url)
                want = expected(name, rule, method, persona)
                checked += 1
                if response.status_code != want:
                    got = response.status_code
                    wrong.append(f"{method} {url} ({name}) as {persona}: {got}, policy says {want}")
        if name == "logout":  # the POST ended the sessions: log everyone in again
            clients = {p: client_as(p) for p in LEVEL_OF}
    assert checked >= len(POLICY) * len(METHODS) * len(LEVEL_OF)
    assert not wrong, "\n".join(wrong)
