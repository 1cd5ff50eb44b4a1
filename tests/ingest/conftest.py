"""Helpers for the ingest tests: load committed samples and broken files by name."""

from __future__ import annotations

from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
SAMPLES = HERE / "samples"
BROKEN = HERE / "broken"


def sample_bytes(name: str) -> bytes:
    """Bytes of a committed good sample."""
    return (SAMPLES / name).read_bytes()


def broken_bytes(name: str) -> bytes:
    """Bytes of a committed broken file."""
    return (BROKEN / name).read_bytes()


@pytest.fixture
def sample():
    return sample_bytes


@pytest.fixture
def broken():
    return broken_bytes


@pytest.fixture(autouse=True)
def _isolated_media():
    """Ingest is pure and writes no media: override the project-wide Django fixture so these
    tests also run without pytest-django (``-p no:django``)."""
    yield
