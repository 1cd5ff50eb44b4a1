"""Search reads the lot summaries the quality service writes from recorded, fitted sweeps."""

import pytest

from labdb.measurements.services import record_file
from labdb.quality.services import recompute_lots
from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts

pytestmark = pytest.mark.django_db

# Generating parameters of the files (chosen here): CJO = 50 pF, VJ = 0.7 V, M = 0.5, no noise.
CJO, VJ, M = 50e-12, 0.7, 0.5


def test_a_part_recorded_and_summarised_is_found_at_its_hand_computed_swing(bench, make_cv):
    for label in ("U1", "U2", "U3"):
        outcome = record_file(make_cv(CJO, VJ, M, unit=label), f"{label}.csv", recompute=False)
        assert outcome[0].status == "stored"
    recompute_lots([bench.lot.pk])
    # With CP = 0: C(1 V)/C(9 V) = ((VJ + 9)/(VJ + 1))^M = (9.7/1.7)^0.5 (by hand).
    swing = (9.7 / 1.7) ** 0.5
    page = search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, min_swing=swing * 0.999))
    assert [h.part_number for h in page.hits] == ["TST-V1"]
    hit = page.hits[0]
    # The fits recover the noise-free generating curve; 1e-4 allows the file's 6 digits.
    assert hit.swing_worst == pytest.approx(swing, rel=1e-4)
    assert (hit.n_lots, hit.units.n_units, hit.units.n_meeting) == (1, 3, 3)
    assert search_parts(SearchQuery(v1_v=1.0, v2_v=9.0, min_swing=swing * 1.001)).total == 0
