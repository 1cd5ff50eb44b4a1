"""quality.hooks.lots_changed: through a job when a broker is set, inline otherwise."""

from __future__ import annotations

from labdb.jobs.models import Job, JobKind, JobState
from labdb.quality import hooks


def test_it_queues_one_recompute_job_per_lot_set_while_it_waits(bench, with_workers):
    hooks.lots_changed([bench.lot.pk])
    hooks.lots_changed([bench.lot.pk, bench.lot.pk])
    jobs = Job.objects.filter(kind=JobKind.RECOMPUTE_LOTS)
    assert jobs.count() == 1
    assert jobs.get().params == {"lot_ids": [bench.lot.pk]}


def test_the_recompute_job_runs_the_quality_service(bench, with_workers, monkeypatch):
    seen = []
    import labdb.quality.services as quality

    monkeypatch.setattr(quality, "recompute_lots", lambda ids: seen.append(list(ids)))
    hooks.lots_changed([bench.lot.pk])
    with_workers.run_all()
    assert seen == [[bench.lot.pk]]
    assert Job.objects.get(kind=JobKind.RECOMPUTE_LOTS).state == JobState.DONE


def test_it_recomputes_inline_without_a_broker(bench, monkeypatch):
    seen = []
    import labdb.quality.services as quality

    monkeypatch.setattr(quality, "recompute_lots", lambda ids: seen.append(list(ids)))
    hooks.lots_changed([bench.lot.pk])
    assert seen == [[bench.lot.pk]]
    assert not Job.objects.exists()
