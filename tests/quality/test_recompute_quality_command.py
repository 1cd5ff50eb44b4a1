"""manage.py recompute_quality: every part or the parts named; an unknown part is a clear error."""

from io import StringIO

import pytest
from django.core.management import CommandError, call_command

from labdb.quality.models import LotSummary

pytestmark = pytest.mark.django_db


def test_it_recomputes_the_named_part(part, make_lot, clean_cjos):
    make_lot("A1", clean_cjos(6))
    out = StringIO()
    call_command("recompute_quality", "--part", part.part_number, stdout=out)
    assert "QT-1: 1 summaries recomputed" in out.getvalue()
    assert LotSummary.objects.filter(lot__part=part).count() == 1
    out = StringIO()
    call_command("recompute_quality", stdout=out)
    assert "0 summaries recomputed, 1 unchanged" in out.getvalue()


def test_it_names_a_part_it_does_not_know(part):
    with pytest.raises(CommandError, match="no part numbered NOPE-9"):
        call_command("recompute_quality", "--part", "NOPE-9")
