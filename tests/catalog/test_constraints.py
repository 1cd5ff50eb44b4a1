"""The database itself refuses duplicates and physically impossible values."""

import pytest
from django.db import IntegrityError, transaction

from labdb.catalog.models import Lot, Part, Unit

pytestmark = pytest.mark.django_db


def _fails(fn):
    with pytest.raises(IntegrityError), transaction.atomic():
        fn()


def test_it_refuses_a_second_part_with_the_same_number():
    Part.objects.create(part_number="P-1")
    _fails(lambda: Part.objects.create(part_number="P-1"))
    assert Part.objects.filter(part_number="P-1").count() == 1


def test_it_refuses_a_duplicate_lot_code_within_a_part_but_not_across_parts():
    a = Part.objects.create(part_number="A")
    b = Part.objects.create(part_number="B")
    Lot.objects.create(part=a, code="L1")
    Lot.objects.create(part=b, code="L1")
    _fails(lambda: Lot.objects.create(part=a, code="L1"))
    assert Lot.objects.filter(code="L1").count() == 2


def test_it_refuses_a_duplicate_unit_label_within_a_lot():
    lot = Lot.objects.create(part=Part.objects.create(part_number="A"), code="L1")
    Unit.objects.create(lot=lot, label="U1")
    _fails(lambda: Unit.objects.create(lot=lot, label="U1"))


@pytest.mark.parametrize(
    "fields",
    [
        {"rated_reverse_v": 0.0},
        {"rated_reverse_v": -5.0},
        {"ref_bias_low_v": 5.0, "ref_bias_high_v": 1.0},
        {"spec_c_min_f": -1e-12},
        {"spec_min_swing": 0.5},
        {"shift_tolerance": 0.0},
    ],
)
def test_it_refuses_physically_impossible_part_settings(fields):
    _fails(lambda: Part.objects.create(part_number="X", **fields))
    assert not Part.objects.filter(part_number="X").exists()
