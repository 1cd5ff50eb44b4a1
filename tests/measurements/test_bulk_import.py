"""The bulk path gives the same outcome per file as recording files one by one."""

from pathlib import Path

import numpy as np
import pytest
from django.conf import settings

from labdb.measurements.models import Fit, Sweep
from labdb.measurements.services import SweepContext, import_files, record_file

pytestmark = pytest.mark.django_db


def _files(make_cv, n=6):
    return [
        (make_cv(unit=f"U{i}", cjo=(40 + 3 * i) * 1e-12, noise=0.002, seed=i), f"u{i}.csv")
        for i in range(n)
    ]


def test_bulk_and_single_imports_store_the_same_fits(bench, make_cv):
    files = _files(make_cv)
    bulk = import_files(((d, n, SweepContext()) for d, n in files), chunk=4)
    assert [o.status for o in bulk] == ["stored"] * len(files)
    bulk_params = {o.sweep.unit.label: o.fit.params for o in bulk}
    # Record the same files for another lot one by one and compare the fitted parameters.
    single = [record_file(d, n, SweepContext(lot="L2"))[0] for d, n in files]
    for o in single:
        a, b = bulk_params[o.sweep.unit.label], o.fit.params
        assert a.keys() == b.keys()
        np.testing.assert_allclose([a[k] for k in a], [b[k] for k in a], rtol=1e-6)


def test_a_bad_file_in_a_chunk_is_rejected_alone_and_leaves_no_file(bench, make_cv):
    files = _files(make_cv, 4)
    narrow = make_cv(unit="N1", bias=[0.0, 0.1, 0.2, 0.3])  # too narrow to fit
    files.insert(2, (narrow, "narrow.csv"))
    files.insert(1, (b"bias (V),C (pF)\n0,x\n", "junk.csv"))
    out = import_files(((d, n, SweepContext()) for d, n in files), chunk=10)
    status = {o.source: o.status for o in out}
    assert status["narrow.csv"] == "rejected" and status["junk.csv"] == "rejected"
    assert sum(s == "stored" for s in status.values()) == 4
    assert Sweep.objects.count() == 4 and not Sweep.objects.filter(unit__label="N1").exists()
    stored = sorted(p.name for p in Path(settings.MEDIA_ROOT).rglob("*") if p.is_file())
    assert stored == sorted(s.raw_file.name.rsplit("/", 1)[-1] for s in Sweep.objects.all())


def test_a_second_bulk_run_reports_duplicates_and_writes_nothing(bench, make_cv):
    files = _files(make_cv, 3)
    import_files((d, n, SweepContext()) for d, n in files)
    again = import_files((d, n, SweepContext()) for d, n in files)
    assert [o.status for o in again] == ["duplicate"] * 3
    assert Fit.objects.filter(sweep__isnull=False).count() == 3


def test_a_chunk_is_stored_with_a_handful_of_statements(
    bench, make_cv, django_assert_max_num_queries
):
    files = _files(make_cv, 20)
    # Per file recording needs about ten statements a file; the chunk writer a fixed few.
    with django_assert_max_num_queries(15):
        out = import_files(((d, n, SweepContext()) for d, n in files), recompute=False)
    assert [o.status for o in out] == ["stored"] * 20
    assert all(o.sweep.current_fit_id == o.fit.pk and o.fit.version == 1 for o in out)


def test_bulk_inserted_rows_are_in_the_audit_trail(bench, make_cv, member):
    from labdb.audit.models import AuditEvent

    out = import_files(((d, n, SweepContext()) for d, n in _files(make_cv, 3)), user=member)
    sweep_ids = {str(o.sweep.pk) for o in out}
    events = AuditEvent.objects.filter(object_type="measurements.sweep", object_id__in=sweep_ids)
    assert events.count() == 3
    assert {e.actor_id for e in events} == {member.pk}
    assert AuditEvent.objects.filter(object_type="catalog.unit", action="created").count() == 3


def test_the_same_file_twice_in_one_chunk_is_stored_once(bench, make_cv):
    data = make_cv(unit="U9")
    out = import_files([(data, "a.csv", SweepContext()), (data, "b.csv", SweepContext())])
    assert [o.status for o in out] == ["stored", "duplicate"]
    assert out[0].sweep.pk == out[1].sweep.pk
    assert Sweep.objects.count() == 1


def test_impedance_files_in_a_bulk_import_go_to_the_impedance_path(bench, make_cv):
    from labdb.measurements.models import Fixture

    Fixture.objects.create(name="analyser A", kind="meter")
    # A series R–C table (R 0.5 Ω, C 40 pF; hand-written values) with no bias column.
    rows = "".join(
        f"{f / 1e6:.6f},0.5,{-1 / (2 * 3.141592653589793 * f * 40e-12):.6f}\n"
        for f in (1e6, 2e6, 5e6, 1e7, 2e7, 5e7)
    )
    table = (
        "# part: TST-V1\n# lot: L1\n# unit: Z1\n# fixture: analyser A\n# bias: 2 V\n"
        "f (MHz),R (ohm),X (ohm)\n" + rows
    ).encode()
    out = import_files([(make_cv(), "cv.csv", SweepContext()), (table, "z.csv", SweepContext())])
    assert [o.status for o in out] == ["stored", "stored"], [o.problems for o in out]
    assert [o.sweep.kind for o in out] == ["cv", "zf"]
