"""Production settings: check --deploy is clean with deploy/env.example; CSP; JSON logs."""

from __future__ import annotations

import json
import logging
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def example_env() -> dict[str, str]:
    env = {}
    for line in (ROOT / "deploy" / "env.example").read_text().splitlines():
        if line.strip() and not line.startswith("#"):
            key, _, value = line.partition("=")
            env[key.strip()] = value.strip()
    return env


def _run(code: str, env: dict[str, str], tmp_path) -> subprocess.CompletedProcess:
    base = {k: v for k, v in os.environ.items() if k in ("PATH", "HOME", "LANG")}
    local = {
        # The example's paths and services do not exist here: point them at scratch space.
        "DATABASE_URL": f"sqlite:///{tmp_path / 'db.sqlite3'}",
        "LABDB_VAR_DIR": str(tmp_path),
        "MEDIA_ROOT": str(tmp_path / "media"),
        "STATIC_ROOT": str(tmp_path / "static"),
        "DJANGO_SETTINGS_MODULE": "labdb.settings",
    }
    return subprocess.run(
        [sys.executable, "-c", code],
        env={**base, **env, **local},
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=120,
    )


def test_check_deploy_is_clean_with_the_documented_production_variables(tmp_path):
    code = (
        "import django, sys; django.setup(); from django.core.management import call_command; "
        "call_command('check', deploy=True, fail_level='WARNING')"
    )
    done = _run(code, example_env(), tmp_path)
    assert done.returncode == 0, done.stderr[-2000:]
    assert "no issues" in done.stdout


def test_check_deploy_complains_without_them(tmp_path):
    code = (
        "import django; django.setup(); from django.core.management import call_command; "
        "call_command('check', deploy=True, fail_level='WARNING')"
    )
    done = _run(code, {"SECRET_KEY": "short", "DEBUG": "0"}, tmp_path)
    assert done.returncode != 0
    assert "security.W004" in done.stderr and "security.W008" in done.stderr


def test_s3_media_storage_is_chosen_by_environment(tmp_path):
    code = "import django; django.setup(); from django.conf import settings; print(settings.STORAGES['default']['BACKEND'], settings.STORAGES['default']['OPTIONS']['bucket_name'])"
    env = {"SECRET_KEY": "x", "MEDIA_STORAGE": "s3", "S3_BUCKET": "lab-raw"}
    done = _run(code, env, tmp_path)
    assert done.stdout.split() == ["storages.backends.s3.S3Storage", "lab-raw"], done.stderr


def test_a_bad_media_storage_value_names_the_variable(tmp_path):
    done = _run(
        "import django; django.setup()", {"SECRET_KEY": "x", "MEDIA_STORAGE": "ftp"}, tmp_path
    )
    assert done.returncode != 0 and "MEDIA_STORAGE='ftp'" in done.stderr


def test_pages_carry_a_policy_that_allows_no_inline_script(viewer_client):
    header = viewer_client.get("/").headers["Content-Security-Policy"]
    directives = dict(d.strip().split(" ", 1) for d in header.split(";"))
    assert directives["script-src"] == "'self'"
    assert directives["object-src"] == "'none'"
    assert "'unsafe-inline'" not in directives["default-src"]


@pytest.mark.parametrize(
    "template", sorted((ROOT / "labdb").rglob("templates/**/*.html")), ids=lambda p: p.name
)
def test_no_template_holds_an_inline_script_or_handler(template):
    html = template.read_text()
    for tag in re.findall(r"<script\b[^>]*>", html, flags=re.I):
        # Scripts load from files; JSON data blocks (json_script) do not execute.
        assert "src=" in tag or 'type="application/json"' in tag, (template, tag)
    assert not re.search(r"\son[a-z]+\s*=", html, flags=re.I), template


def test_log_lines_are_json_with_the_extra_fields():
    from labdb.jobs.logfmt import JsonFormatter

    record = logging.makeLogRecord(
        {"name": "labdb.jobs", "levelname": "INFO", "msg": "job %s finished", "args": (7,)}
    )
    record.job_id = 7
    line = json.loads(JsonFormatter().format(record))
    assert line["message"] == "job 7 finished" and line["job_id"] == 7
    assert line["level"] == "INFO" and line["logger"] == "labdb.jobs"
