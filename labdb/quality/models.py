"""Lot summaries (statistics of a lot's current unit fits) and review-able flags."""

from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q

from labdb.catalog.models import Lot, Part, Unit

#: Every column search's ranking pass reads, in the order its covering indexes keep them.
SEARCH_COLUMNS = [
    "illumination",
    "temperature_c",
    "part",
    "received_on",
    "lot",
    "n_units",
    "bias_min_v",
    "bias_max_v",
    "cjo_med",
    "vj_med",
    "m_med",
    "cp_med",
]


class LotSummary(models.Model):
    """Per lot and condition set: statistics of the unit fits and derived figures.

    The figures search filters on are columns; the rest (per-figure spread, the pointwise
    median curve and its 10–90 % band) live in JSON.
    """

    lot = models.ForeignKey(Lot, on_delete=models.CASCADE, related_name="summaries")
    # Copies of lot.part and lot.received_on, so search filters and ranks without joining
    # the lots (labdb/search). Whoever writes a summary sets both from its lot.
    part = models.ForeignKey(
        Part,
        null=True,
        on_delete=models.CASCADE,
        related_name="+",
        db_index=False,
        help_text="The lot's part (copy of lot.part, for search).",
    )
    received_on = models.DateField(
        null=True, blank=True, help_text="The lot's receipt date (copy, for search)."
    )
    illumination = models.CharField(max_length=16)
    temperature_c = models.FloatField(help_text="Centre of the temperature band [°C].")
    # Kept by labdb.quality.services.newest whenever a part's summaries or lots change.
    newest_in_condition = models.BooleanField(
        default=False,
        help_text="No later lot of the part has a summary under the same illumination and "
        "temperature band (search's 'latest lot' starts from these rows).",
    )
    n_units = models.PositiveIntegerField()
    n_sweeps = models.PositiveIntegerField()
    cjo_med = models.FloatField()
    vj_med = models.FloatField()
    m_med = models.FloatField()
    cp_med = models.FloatField(default=0.0)
    c_low_med_f = models.FloatField(null=True, help_text="Median C at the reference low bias.")
    c_high_med_f = models.FloatField(null=True, help_text="Median C at the reference high bias.")
    swing_med = models.FloatField(null=True)
    swing_min = models.FloatField(null=True, help_text="Smallest unit swing in the lot.")
    bias_min_v = models.FloatField(help_text="Common measured range: highest unit minimum.")
    bias_max_v = models.FloatField(help_text="Common measured range: lowest unit maximum.")
    figures = models.JSONField(default=dict)
    band = models.JSONField(default=dict)
    # [[unit id, label, CJO, VJ, M, CP], ...]: each unit's most recent fit in this condition
    # set, so search judges a page of lots' units without reading a million sweep rows.
    unit_fits = models.JSONField(default=list)
    # What judging other lots and listing findings needs (medians, spreads, the judged unit
    # values, between-lot results, units that may raise a flag): small, so a new lot's
    # evaluation reads this for every earlier lot instead of their full ``figures``.
    digest = models.JSONField(default=dict)
    inputs_sha256 = models.CharField(max_length=64, blank=True)
    computed_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["lot", "illumination", "temperature_c"]
        constraints = [
            models.UniqueConstraint(
                fields=["lot", "illumination", "temperature_c"],
                name="summary_unique_per_lot_condition",
            ),
            models.CheckConstraint(condition=Q(n_units__gte=1), name="summary_has_units"),
        ]
        indexes = [
            models.Index(fields=["illumination", "temperature_c", "swing_med"]),
            # Search: a part's summaries by condition and receipt (latest lot, since a date).
            models.Index(
                fields=["part", "illumination", "temperature_c", "received_on"],
                name="summary_search_part_idx",
            ),
            # Search ranks every summary of a condition set: with all the columns it reads
            # in the key, PostgreSQL scans this narrow index instead of the rows, whose
            # figures/band/digest JSON makes them wide.
            models.Index(
                fields=SEARCH_COLUMNS,
                name="summary_search_cover_idx",
            ),
            # Search's "latest lot": the same columns over the one newest summary per part
            # and condition set, a tenth of the rows.
            models.Index(
                fields=SEARCH_COLUMNS,
                condition=Q(newest_in_condition=True),
                name="summary_search_newest_idx",
            ),
        ]

    def __str__(self) -> str:
        return f"{self.lot} ({self.illumination}, {self.temperature_c:g} °C)"


class FlagState(models.TextChoices):
    OPEN = "open", "open"
    ACKNOWLEDGED = "acknowledged", "acknowledged"
    DISMISSED = "dismissed", "dismissed"


class Flag(models.Model):
    """A finding that a unit or a lot stands out, with its evidence and review state."""

    part = models.ForeignKey(Part, on_delete=models.CASCADE, related_name="flags")
    lot = models.ForeignKey(
        Lot, null=True, blank=True, on_delete=models.CASCADE, related_name="flags"
    )
    unit = models.ForeignKey(
        Unit, null=True, blank=True, on_delete=models.CASCADE, related_name="flags"
    )
    rule = models.CharField(max_length=40)
    figure = models.CharField(max_length=40, blank=True)
    condition = models.CharField(max_length=40, blank=True)
    summary = models.CharField(max_length=300)
    evidence = models.JSONField(default=dict)
    active = models.BooleanField(
        default=True, help_text="Does the rule still fire on current data?"
    )
    state = models.CharField(max_length=16, choices=FlagState.choices, default=FlagState.OPEN)
    note = models.TextField(blank=True)
    reviewed_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    reviewed_at = models.DateTimeField(null=True, blank=True)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["-updated_at"]
        constraints = [
            models.UniqueConstraint(
                fields=["unit", "rule", "figure", "condition"],
                condition=Q(unit__isnull=False),
                name="flag_unique_per_unit_rule",
            ),
            models.UniqueConstraint(
                fields=["lot", "rule", "figure", "condition"],
                condition=Q(unit__isnull=True, lot__isnull=False),
                name="flag_unique_per_lot_rule",
            ),
            models.CheckConstraint(
                condition=~Q(state="acknowledged") | ~Q(note=""),
                name="flag_acknowledged_needs_note",
            ),
        ]
        indexes = [models.Index(fields=["state", "active"])]

    def __str__(self) -> str:
        subject = self.unit or self.lot or self.part
        return f"{self.rule} {self.figure} on {subject}"
