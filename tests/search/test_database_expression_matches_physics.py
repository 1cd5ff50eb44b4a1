"""The junction model evaluated by the database equals the physics core's, branch for branch."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from labdb.physics import junction_capacitance
from labdb.quality.models import LotSummary
from labdb.search.expressions import as_float, branch_c, const, lot_c

pytestmark = pytest.mark.django_db

# Reverse biases [V], including forward bias beyond the SPICE knee −FC·VJ (linear extension).
BIASES = [-1.2, -0.6, -0.2, 0.0, 0.3, 5.0, 25.0]


def test_the_database_junction_expression_matches_junction_capacitance(stock):
    rng = np.random.default_rng(6)
    part = stock.part("EXPR-1")
    params = []
    for i in range(6):
        p = (
            float(np.exp(rng.uniform(np.log(1e-12), np.log(500e-12)))),
            float(rng.uniform(0.3, 2.5)),
            float(rng.uniform(0.2, 2.0)),
            float(rng.uniform(0.0, 3e-12)),
        )
        params.append(p)
        stock.lot(part, f"L{i}", p, n_units=1)
    rows = LotSummary.objects.order_by("lot__code").annotate(
        **{f"c{i}": as_float(lot_c(const(v))) for i, v in enumerate(BIASES)}
    )
    for row, p in zip(rows, params, strict=True):
        got = [getattr(row, f"c{i}") for i in range(len(BIASES))]
        # Reference: labdb.physics.junction_capacitance (itself checked against ngspice).
        assert_allclose(got, junction_capacitance(np.array(BIASES), *p), rtol=1e-12, atol=0)


def test_the_coupled_branch_is_the_series_combination(stock):
    part = stock.part("EXPR-2")
    stock.lot(part, "A", (80e-12, 0.8, 0.5, 0.0), n_units=1)
    cc = 47e-12
    row = LotSummary.objects.annotate(b=as_float(branch_c(lot_c(const(4.0)), cc))).get()
    cj = 80e-12 * (1 + 4.0 / 0.8) ** -0.5
    # Two capacitors in series: Cj·Cc/(Cj + Cc) (circuit theory, from memory).
    assert row.b == pytest.approx(cj * cc / (cj + cc), rel=1e-12)
