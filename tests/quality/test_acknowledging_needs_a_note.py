"""Acknowledging a flag needs a note; dismissing does not; the refusal names the field."""

import pytest

from labdb.quality.errors import ReviewRefused
from labdb.quality.models import Flag, FlagState
from labdb.quality.services import recompute_part, review_flag

pytestmark = pytest.mark.django_db


@pytest.fixture
def flag(part, make_lot, clean_cjos):
    cjos = clean_cjos(9, seed=7)
    cjos[4] *= 0.7
    make_lot("A1", cjos)
    recompute_part(part)
    return Flag.objects.filter(unit__label="U05").first()


@pytest.mark.parametrize("note", ["", "   "])
def test_an_acknowledgement_without_a_note_is_refused(flag, curator, note):
    with pytest.raises(ReviewRefused) as exc:
        review_flag(flag, FlagState.ACKNOWLEDGED, curator, note)
    assert exc.value.field == "note" and "note" in str(exc.value)
    flag.refresh_from_db()
    assert flag.state == FlagState.OPEN and flag.reviewed_by is None


def test_an_acknowledgement_records_who_when_and_why(flag, curator):
    review_flag(flag, FlagState.ACKNOWLEDGED, curator, "supplier confirmed a mixed reel")
    flag.refresh_from_db()
    assert (flag.state, flag.note, flag.reviewed_by) == (
        FlagState.ACKNOWLEDGED,
        "supplier confirmed a mixed reel",
        curator,
    )
    assert (
        flag.reviewed_at is not None
        and flag.evidence["reviewed"]["value"] == flag.evidence["measure"]["value"]
    )


def test_a_dismissal_needs_no_note(flag, curator):
    review_flag(flag, FlagState.DISMISSED, curator)
    flag.refresh_from_db()
    assert flag.state == FlagState.DISMISSED


def test_an_unknown_state_is_refused(flag, curator):
    with pytest.raises(ReviewRefused) as exc:
        review_flag(flag, "closed", curator, "x")
    assert exc.value.field == "state"
