"""deploy/: the compose file parses, and the example environment covers every variable."""

from __future__ import annotations

import re
from pathlib import Path

import yaml

ROOT = Path(__file__).resolve().parents[2]
DEPLOY = ROOT / "deploy"


def _read_vars() -> set[str]:
    """Every variable settings.py reads through its env_* helpers."""
    text = (ROOT / "labdb" / "settings.py").read_text()
    return set(re.findall(r'env_(?:str|bool|int|float|list)\(\s*"([A-Z0-9_]+)"', text))


def _example() -> dict[str, str]:
    out = {}
    for line in (DEPLOY / "env.example").read_text().splitlines():
        if line.strip() and not line.startswith("#"):
            key, _, value = line.partition("=")
            out[key] = value
    return out


def test_the_compose_file_is_valid_yaml_with_the_four_services():
    doc = yaml.safe_load((DEPLOY / "compose.yaml").read_text())
    assert set(doc["services"]) == {"db", "redis", "web", "worker"}
    worker = doc["services"]["worker"]
    assert worker["command"][:3] == ["celery", "-A", "labdb.celery"]
    assert doc["services"]["web"]["environment"]["CELERY_BROKER_URL"].startswith("redis://")


def test_the_example_environment_lists_every_variable_settings_reads():
    missing = _read_vars() - set(_example())
    assert not missing, f"add to deploy/env.example: {sorted(missing)}"


def test_the_readme_table_lists_every_variable_settings_reads():
    readme = (ROOT / "README.md").read_text()
    missing = {v for v in _read_vars() if f"`{v}`" not in readme}
    assert not missing, f"add to README.md § Configuration: {sorted(missing)}"


def test_nginx_accepts_uploads_as_large_as_the_app_does():
    upload_max = int(_example()["UPLOAD_MAX_BYTES"])
    conf = (DEPLOY / "nginx.conf").read_text()
    size_mib = int(re.search(r"client_max_body_size\s+(\d+)m;", conf).group(1))
    assert size_mib * 1024 * 1024 >= upload_max


def test_the_systemd_units_start_gunicorn_and_a_celery_worker():
    web = (DEPLOY / "systemd" / "labdb-web.service").read_text()
    worker = (DEPLOY / "systemd" / "labdb-worker.service").read_text()
    assert "gunicorn -c deploy/gunicorn.conf.py" in web
    assert "celery -A labdb.celery worker" in worker
    assert "EnvironmentFile=/etc/labdb/env" in web and "EnvironmentFile=/etc/labdb/env" in worker
