"""The demo lab, loaded through the real import path, flags its drifting lot and outlier unit only."""

import json

import pytest
from django.conf import settings
from django.core.management import call_command

from labdb.quality.models import Flag, LotSummary

pytestmark = pytest.mark.django_db


def test_only_the_planted_lot_and_unit_are_flagged():
    call_command("seed_demo", "--no-users")
    catalog = json.loads((settings.BASE_DIR / "fixtures" / "demo" / "catalog.json").read_text())
    expected = catalog["expected_flags"]
    drifting = {(d["part"], d["lot"]) for d in expected["drifting_lots"]}
    outliers = {(o["part"], o["lot"], o["unit"]) for o in expected["outlier_units"]}

    active = Flag.objects.filter(active=True).select_related("part", "lot", "unit")
    lot_flags = {(f.part.part_number, f.lot.code) for f in active if f.unit is None}
    unit_flags = {(f.part.part_number, f.lot.code, f.unit.label) for f in active if f.unit}
    assert lot_flags == drifting
    assert unit_flags == outliers

    # The drifting lot is caught by both between-lot rules the catalogue names ...
    ((part, lot),) = drifting
    rules = set(active.filter(lot__code=lot, unit=None).values_list("rule", flat=True))
    assert rules == {"lot_chart", "lot_shift"}
    # ... and the outlier unit by its z-score on C at the low reference bias (0 V), low side.
    ((part, lot, unit),) = outliers
    z = active.get(unit__label=unit, lot__code=lot, rule="unit_zscore", figure="c_low")
    assert z.evidence["z"] < -3.5
    # Every lot got a summary in its main condition set, and the clean ones are judged too.
    assert LotSummary.objects.filter(illumination="dark", temperature_c=25.0).count() == 14
