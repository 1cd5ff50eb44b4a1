"""Concurrent writers on PostgreSQL: parallel uploads into one lot, parallel refits.

Each thread has its own database connection (closed when it ends), as gunicorn workers
and Celery workers do. Nothing may be lost, no version number may repeat, and no deadlock
or integrity error may escape to a caller.
"""

from __future__ import annotations

import logging
import threading
from collections import Counter

import pytest
from django.db import connection

pytestmark = [
    pytest.mark.postgres,
    pytest.mark.django_db(transaction=True),
    pytest.mark.skipif(
        connection.vendor != "postgresql",
        reason="needs PostgreSQL (row locks and concurrent transactions); set DATABASE_URL "
        "to a PostgreSQL database, as .ci/run's PostgreSQL pass does",
    ),
]

N_UPLOADS = 16


def run_parallel(jobs: list) -> list:
    """Run each zero-argument callable in its own thread, all released at once.

    Returns their results in order; an exception in any thread is re-raised here.
    """
    barrier = threading.Barrier(len(jobs))
    results: list = [None] * len(jobs)
    errors: list = []

    def worker(i: int, job) -> None:
        from django.db import connection as conn

        try:
            barrier.wait(timeout=30)
            results[i] = job()
        except BaseException as exc:  # reported below, in the test's own thread
            errors.append(exc)
        finally:
            conn.close()  # each thread opened its own connection

    threads = [threading.Thread(target=worker, args=(i, j)) for i, j in enumerate(jobs)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=300)
    assert not any(t.is_alive() for t in threads), "a writer is still blocked after 300 s"
    if errors:
        raise errors[0]
    return results


@pytest.fixture
def uploader(db):
    from django.contrib.auth.models import Group, User

    user = User.objects.create_user("bench-writer", password="x")
    user.groups.add(Group.objects.get_or_create(name="member")[0])  # a flush may have removed it
    return user


class _Kept(logging.Handler):
    def __init__(self):
        super().__init__(logging.ERROR)
        self.records: list[logging.LogRecord] = []

    def emit(self, record):
        self.records.append(record)


@pytest.fixture
def quality_errors():
    """Failures the quality hook logged instead of raising (it must log none here)."""
    kept = _Kept()
    logger = logging.getLogger("labdb.quality.hooks")
    logger.addHandler(kept)
    yield lambda: [f"{r.getMessage()}: {r.exc_info and r.exc_info[1]!r}" for r in kept.records]
    logger.removeHandler(kept)


def test_sixteen_parallel_uploads_into_one_new_lot_lose_nothing(
    bench, make_cv, uploader, quality_errors
):
    from labdb.catalog.models import Lot
    from labdb.measurements.models import Fit, Sweep
    from labdb.measurements.services import record_file

    def upload(i: int):
        # Each unit its own invented parameters, so every file differs (seeded noise).
        data = make_cv(cjo=(40 + i) * 1e-12, lot="CONC", unit=f"U{i:02d}", noise=0.002, seed=i)
        return record_file(data, f"u{i:02d}.csv", user=uploader)

    outcomes = run_parallel([lambda i=i: upload(i) for i in range(N_UPLOADS)])

    statuses = Counter(o.status for out in outcomes for o in out)
    problems = [str(p) for out in outcomes for o in out for p in o.problems]
    assert statuses == {"stored": N_UPLOADS}, problems
    lot = Lot.objects.get(part=bench.part, code="CONC")  # one lot, however many raced for it
    assert lot.units.count() == N_UPLOADS
    sweeps = Sweep.objects.filter(unit__lot=lot)
    assert sweeps.count() == N_UPLOADS
    assert sorted(sweeps.values_list("current_fit__version", flat=True)) == [1] * N_UPLOADS
    assert Fit.objects.filter(sweep__unit__lot=lot).count() == N_UPLOADS
    assert quality_errors() == []


def test_the_same_file_uploaded_eight_times_at_once_is_stored_once(bench, make_cv, uploader):
    from labdb.measurements.models import Sweep
    from labdb.measurements.services import record_file

    data = make_cv(unit="TWIN")
    outcomes = run_parallel(
        [lambda: record_file(data, "twin.csv", user=uploader, recompute=False)] * 8
    )
    statuses = Counter(o.status for out in outcomes for o in out)
    assert statuses["stored"] == 1
    # The others are told: already stored, or lost the race and may upload again.
    assert statuses["duplicate"] + statuses["rejected"] == 7
    for out in outcomes:
        for o in out:
            if o.status == "rejected":
                assert [p.message for p in o.problems] == ["stored concurrently; upload again"]
    assert Sweep.objects.filter(unit__label="TWIN").count() == 1


@pytest.fixture
def six_sweeps(bench, make_cv, uploader):
    from labdb.measurements.services import record_file

    ids = []
    for i in range(6):
        (out,) = record_file(
            make_cv(unit=f"R{i}", noise=0.002, seed=10 + i), f"r{i}.csv", user=uploader
        )
        assert out.status == "stored", out.problems
        ids.append(out.sweep.pk)
    return ids


def versions_by_sweep(ids) -> dict[int, list[int]]:
    from labdb.measurements.models import Fit

    got: dict[int, list[int]] = {i: [] for i in ids}
    for sweep_id, version in Fit.objects.filter(sweep_id__in=ids).values_list(
        "sweep_id", "version"
    ):
        got[sweep_id].append(version)
    return {k: sorted(v) for k, v in got.items()}


def test_eight_parallel_refits_of_the_same_sweeps_write_each_new_version_once(
    six_sweeps, uploader, quality_errors
):
    from labdb.measurements.services import refit_sweeps

    summaries = run_parallel(
        [lambda: refit_sweeps(six_sweeps, model="junction", user=uploader)] * 8
    )
    assert sum(s.new_versions for s in summaries) == len(six_sweeps)
    assert all(not s.failed for s in summaries)
    assert versions_by_sweep(six_sweeps) == {i: [1, 2] for i in six_sweeps}
    assert quality_errors() == []


def test_refits_racing_with_different_models_keep_versions_unique_and_current_newest(
    six_sweeps, uploader, quality_errors
):
    from django.db.models import Max

    from labdb.measurements.models import Sweep
    from labdb.measurements.services import refit_sweeps

    models = ["junction", "junction+cp"] * 4
    run_parallel([lambda m=m: refit_sweeps(six_sweeps, model=m, user=uploader) for m in models])
    for sweep_id, versions in versions_by_sweep(six_sweeps).items():
        assert versions == list(range(1, len(versions) + 1)), (sweep_id, versions)
        assert len(versions) >= 3  # at least one new version per model
    current = Sweep.objects.filter(pk__in=six_sweeps).annotate(newest=Max("fits__version"))
    assert all(s.current_fit.version == s.newest for s in current)
    assert quality_errors() == []
