"""Fixtures for the job tests: zip archives of generated C–V files, and an inline enqueue."""

from __future__ import annotations

import io
import zipfile

import pytest


@pytest.fixture
def make_archive(make_cv):
    """A zip of ``n`` C–V files, one unit each, with known CJO = 40 pF + i·1 pF."""

    def build(n: int = 4, *, lot: str = "L1", prefix: str = "U") -> bytes:
        buf = io.BytesIO()
        with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
            for i in range(n):
                data = make_cv(cjo=(40 + i) * 1e-12, unit=f"{prefix}{i:03d}", lot=lot)
                zf.writestr(f"batch/{prefix}{i:03d}.csv", data)
        return buf.getvalue()

    return build


@pytest.fixture
def with_workers(monkeypatch, settings):
    """Behave as if a broker were configured, but run each enqueued job right here.

    Returns the list of job ids in the order they were handed to the (pretend) workers.
    """
    from labdb.jobs.services import runner, submit

    class Handed(list):
        def run_all(self) -> None:
            while self:
                runner.execute(self.pop(0))

    handed = Handed()
    # Never contacted: every enqueue is intercepted below.
    settings.CELERY_BROKER_URL = "redis://broker.invalid:6379/0"
    monkeypatch.setattr(submit, "_enqueue", lambda job_id: handed.append(job_id))
    return handed
