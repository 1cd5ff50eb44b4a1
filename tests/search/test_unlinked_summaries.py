"""A lot summary written without its part link is not searched, and the answer says so."""

import pytest

from labdb.quality.models import LotSummary
from labdb.search.queries import SearchQuery, TankQuery
from labdb.search.services import find_tanks, search_parts

pytestmark = pytest.mark.django_db


def test_an_unlinked_summary_is_reported_not_silently_dropped(stock):
    part = stock.part("UL-1")
    stock.lot(part, "A", (50e-12, 0.7, 0.5, 0.0))
    LotSummary.objects.update(part=None)  # as a writer that forgot the copy would leave it
    page = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0))
    assert page.total == 0
    assert any("1 lot summary not yet linked to their part" in w for w in page.warnings)
    tank = find_tanks(TankQuery(inductance_h=10e-6, f_low_hz=5e6, f_high_hz=6e6, bias_max_v=5.0))
    assert any("not yet linked" in w for w in tank.warnings)
