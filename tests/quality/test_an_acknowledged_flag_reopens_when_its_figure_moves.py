"""An acknowledged flag reopens when its figure moves by more than 25 % of its distance to the limit."""

import hashlib

import pytest

from labdb.measurements.models import Fit, Sweep
from labdb.quality.models import Flag, FlagState
from labdb.quality.services import is_material, recompute_lots, review_flag

pytestmark = pytest.mark.django_db


def test_materiality_is_a_quarter_of_the_distance_to_the_limit():
    # Reviewed at z = −8 against the limit −3.5: the distance is 4.5, a quarter of it 1.125
    # (the definition documented in flags.is_material; common practice, no source).
    reviewed = {"value": -8.0, "limit": -3.5}
    assert not is_material(reviewed, -9.1, -3.5)
    assert is_material(reviewed, -9.2, -3.5)
    assert is_material(reviewed, -6.8, -3.5)  # either direction
    assert not is_material(None, -20.0, -3.5)  # never reviewed: nothing to reopen


@pytest.fixture
def acknowledged(part, make_lot, clean_cjos, curator):
    cjos = clean_cjos(9, seed=7)
    cjos[4] *= 0.7
    lot = make_lot("A1", cjos)
    recompute_lots([lot.pk])
    flag = Flag.objects.get(unit__label="U05", rule="unit_zscore", figure="c_low")
    review_flag(flag, FlagState.ACKNOWLEDGED, curator, "rework unit, kept for tests")
    return lot, flag


def _refit_unit(lot, label, factor):
    """A new current fit version for the unit's sweep with CJO scaled by ``factor``."""
    sweep = Sweep.objects.get(unit__lot=lot, unit__label=label)
    old = sweep.current_fit
    fit = Fit.objects.create(
        sweep=sweep,
        version=old.version + 1,
        model=old.model,
        params=dict(old.params, cjo=old.cjo * factor),
        stderr=old.stderr,
        correlation=[],
        cjo=old.cjo * factor,
        vj=old.vj,
        m=old.m,
        cp=old.cp,
        rms_rel=old.rms_rel,
        r2=1.0,
        n_points=old.n_points,
        bias_min_v=old.bias_min_v,
        bias_max_v=old.bias_max_v,
        converged=True,
        fitter_version=old.fitter_version,
        input_sha256=hashlib.sha256(f"{old.input_sha256}-{factor}".encode()).hexdigest(),
        origin="refit",
    )
    Sweep.objects.filter(pk=sweep.pk).update(current_fit=fit)
    recompute_lots([lot.pk])


def test_a_small_move_keeps_the_acknowledgement(acknowledged):
    lot, flag = acknowledged
    _refit_unit(lot, "U05", 0.99)  # z from about −35 to −36: well under a quarter of 31.5
    flag.refresh_from_db()
    assert flag.state == FlagState.ACKNOWLEDGED and "reopened" not in flag.evidence


def test_a_large_move_reopens_and_keeps_the_old_review(acknowledged, curator):
    lot, flag = acknowledged
    _refit_unit(lot, "U05", 0.7)  # about twice as far from the lot as when reviewed
    flag.refresh_from_db()
    assert flag.state == FlagState.OPEN and flag.active
    assert flag.evidence["reopened"]["was"]["state"] == FlagState.ACKNOWLEDGED
    assert flag.note == "rework unit, kept for tests" and flag.reviewed_by == curator
