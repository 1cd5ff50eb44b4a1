"""Search refines its page with unit fits: units reaching the minimum swing, the worst unit."""

import pytest

from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

pytestmark = pytest.mark.django_db


def swing(m, v1=1.0, v2=9.0, vj=0.7):
    # CP = 0: C(V1)/C(V2) = ((VJ + V2)/(VJ + V1))^M (SPICE depletion formula, by hand).
    return ((vj + v2) / (vj + v1)) ** m


def test_the_fraction_of_units_and_the_worst_unit_come_from_unit_fits(stock):
    units = [(50e-12, 0.7, m, 0.0) for m in (0.50, 0.52, 0.48, 0.55, 0.40)]
    stock.lot(stock.part("US-1"), "A", None, units=units)
    q = SearchQuery(v1_v=1.0, v2_v=9.0, min_swing=swing(0.49))
    hit = search_parts(q).hits[0]
    # The lot median has M = 0.50 and passes; units with M = 0.48 and 0.40 fall short.
    assert hit.swing_worst == pytest.approx(swing(0.50), rel=1e-12)
    assert (hit.units.n_meeting, hit.units.n_units) == (3, 5)
    assert hit.units.fraction_meeting == pytest.approx(0.6)
    assert hit.units.worst == "lot A unit U05"
    assert hit.units.worst_swing == pytest.approx(swing(0.40), rel=1e-12)


def test_a_unit_counts_with_its_most_recent_sweep(bench, make_cv):
    # Recorded and summarised for real: U1 measured twice at the same time, M 0.5 then 0.3;
    # the sweep stored later wins the tie.
    from labdb.measurements.models import Sweep
    from labdb.measurements.services import record_file
    from labdb.quality.services import recompute_lots

    for m in (0.5, 0.3):
        assert record_file(make_cv(m=m), f"U1-{m}.csv", recompute=False)[0].status == "stored"
    recompute_lots([bench.lot.pk])
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0)).hits[0]
    assert hit.units.n_units == 1
    # The fit recovers the file's curve to its 6 printed digits.
    assert hit.units.worst_swing == pytest.approx(swing(0.3), rel=1e-4)
    # The first sweep turns out to be measured later: it is now the unit's most recent.
    first = Sweep.objects.order_by("pk").first()
    Sweep.objects.filter(pk=first.pk).update(measured_at=first.measured_at.replace(hour=23))
    recompute_lots([bench.lot.pk])
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0)).hits[0]
    assert hit.units.worst_swing == pytest.approx(swing(0.5), rel=1e-4)


def test_unit_fits_under_other_conditions_do_not_count(stock):
    part = stock.part("US-3")
    lot = stock.lot(part, "A", (50e-12, 0.7, 0.5, 0.0), n_units=2)
    stock.unit_fit(lot, "U03", (50e-12, 0.7, 0.2, 0.0), illumination="illuminated")
    hit = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, min_swing=1.0)).hits[0]
    assert (hit.units.n_meeting, hit.units.n_units) == (2, 2)
