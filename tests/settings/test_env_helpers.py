"""Settings read from the environment fail loudly on malformed values."""

import pytest
from django.core.exceptions import ImproperlyConfigured

from labdb.settings import env_bool, env_int, env_list


def test_env_bool_reads_the_usual_spellings(monkeypatch):
    monkeypatch.setenv("X_FLAG", "yes")
    assert env_bool("X_FLAG") is True
    monkeypatch.setenv("X_FLAG", "0")
    assert env_bool("X_FLAG", True) is False


def test_env_bool_names_the_variable_when_it_cannot_read_it(monkeypatch):
    monkeypatch.setenv("X_FLAG", "maybe")
    with pytest.raises(ImproperlyConfigured, match="X_FLAG"):
        env_bool("X_FLAG")


def test_env_int_names_the_variable(monkeypatch):
    monkeypatch.setenv("X_N", "12k")
    with pytest.raises(ImproperlyConfigured, match="X_N"):
        env_int("X_N", 1)


def test_env_list_splits_and_trims(monkeypatch):
    monkeypatch.setenv("X_HOSTS", " a.example , b.example,, ")
    assert env_list("X_HOSTS", []) == ["a.example", "b.example"]


def test_settings_refuse_to_start_without_a_secret_key_in_production(tmp_path):
    import os
    import subprocess
    import sys

    env = {k: v for k, v in os.environ.items() if k not in ("SECRET_KEY", "DEBUG")}
    env["DEBUG"] = "0"
    env["LABDB_VAR_DIR"] = str(tmp_path)
    result = subprocess.run(
        [sys.executable, "-c", "import labdb.settings"], env=env, capture_output=True, text=True
    )
    assert result.returncode != 0
    assert "SECRET_KEY is not set" in result.stderr
