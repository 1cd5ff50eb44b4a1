"""Parts, lots and units: what a lab owns and measures."""

from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q
from django.urls import reverse


class PartKind(models.TextChoices):
    VARACTOR = "varactor", "varactor"
    LED = "led", "LED"
    RECTIFIER = "rectifier", "rectifier"
    ZENER = "zener", "zener"
    PHOTODIODE = "photodiode", "photodiode"
    CAPACITOR = "capacitor", "capacitor"
    OTHER = "other", "other"


class Part(models.Model):
    """A component type by part number, with the settings a curator edits."""

    part_number = models.CharField(max_length=80, unique=True)
    kind = models.CharField(max_length=20, choices=PartKind.choices, default=PartKind.OTHER)
    description = models.CharField(max_length=300, blank=True)
    manufacturer = models.CharField(max_length=120, blank=True)
    rated_reverse_v = models.FloatField(
        null=True, blank=True, help_text="Maximum rated reverse voltage [V], from the data sheet."
    )
    # Reference bias window for swing and the reference capacitances [V, reverse positive].
    ref_bias_low_v = models.FloatField(null=True, blank=True)
    ref_bias_high_v = models.FloatField(null=True, blank=True)
    # Optional spec limits: capacitance at a named bias, and a minimum swing.
    spec_bias_v = models.FloatField(null=True, blank=True)
    spec_c_min_f = models.FloatField(null=True, blank=True)
    spec_c_max_f = models.FloatField(null=True, blank=True)
    spec_min_swing = models.FloatField(null=True, blank=True)
    shift_tolerance = models.FloatField(
        default=0.05, help_text="Relative lot-to-lot shift treated as practically large."
    )
    archived = models.BooleanField(default=False)
    created_at = models.DateTimeField(auto_now_add=True)
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )

    class Meta:
        ordering = ["part_number"]
        constraints = [
            models.CheckConstraint(
                condition=Q(rated_reverse_v__isnull=True) | Q(rated_reverse_v__gt=0),
                name="part_rated_reverse_positive",
            ),
            models.CheckConstraint(
                condition=Q(ref_bias_low_v__isnull=True)
                | Q(ref_bias_high_v__isnull=True)
                | Q(ref_bias_low_v__lt=models.F("ref_bias_high_v")),
                name="part_ref_window_ordered",
            ),
            models.CheckConstraint(
                condition=Q(spec_c_min_f__isnull=True) | Q(spec_c_min_f__gt=0),
                name="part_spec_c_min_positive",
            ),
            models.CheckConstraint(
                condition=Q(spec_c_max_f__isnull=True) | Q(spec_c_max_f__gt=0),
                name="part_spec_c_max_positive",
            ),
            models.CheckConstraint(
                condition=Q(spec_min_swing__isnull=True) | Q(spec_min_swing__gte=1),
                name="part_spec_swing_at_least_one",
            ),
            models.CheckConstraint(
                condition=Q(shift_tolerance__gt=0) & Q(shift_tolerance__lt=1),
                name="part_shift_tolerance_fraction",
            ),
        ]

    def __str__(self) -> str:
        return self.part_number

    def get_absolute_url(self) -> str:
        return reverse("part-detail", args=[self.part_number])


class Lot(models.Model):
    """A batch of one part received together."""

    part = models.ForeignKey(Part, on_delete=models.PROTECT, related_name="lots")
    code = models.CharField(max_length=80)
    date_code = models.CharField(max_length=40, blank=True)
    received_on = models.DateField(null=True, blank=True)
    source = models.CharField(max_length=200, blank=True)
    notes = models.TextField(blank=True)
    archived = models.BooleanField(default=False)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["part__part_number", "received_on", "code"]
        constraints = [
            models.UniqueConstraint(fields=["part", "code"], name="lot_code_unique_per_part"),
        ]
        indexes = [models.Index(fields=["part", "received_on"])]

    def __str__(self) -> str:
        return f"{self.part.part_number} lot {self.code}"

    def get_absolute_url(self) -> str:
        return reverse("lot-detail", args=[self.pk])


class Unit(models.Model):
    """One physical device of a lot."""

    lot = models.ForeignKey(Lot, on_delete=models.PROTECT, related_name="units")
    label = models.CharField(max_length=80)
    notes = models.TextField(blank=True)
    archived = models.BooleanField(default=False)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["lot", "label"]
        constraints = [
            models.UniqueConstraint(fields=["lot", "label"], name="unit_label_unique_per_lot"),
        ]

    def __str__(self) -> str:
        return f"{self.lot} unit {self.label}"

    def get_absolute_url(self) -> str:
        return reverse("unit-detail", args=[self.pk])
