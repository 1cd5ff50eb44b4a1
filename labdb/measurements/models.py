"""Fixtures, their calibrations, sweeps (raw file + points) and immutable fit versions."""

from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q
from django.urls import reverse

from labdb.catalog.models import Unit


class FixtureKind(models.TextChoices):
    METER = "meter", "meter (reads capacitance)"
    OSCILLATOR = "oscillator", "oscillator (reads frequency)"


class Fixture(models.Model):
    """A measurement setup."""

    name = models.CharField(max_length=120, unique=True)
    kind = models.CharField(max_length=20, choices=FixtureKind.choices)
    description = models.CharField(max_length=300, blank=True)
    test_frequency_hz = models.FloatField(null=True, blank=True)
    test_level_v = models.FloatField(null=True, blank=True)
    nominal_inductance_h = models.FloatField(null=True, blank=True)
    coupling_f = models.FloatField(
        null=True, blank=True, help_text="Series coupling capacitor between tank and unit [F]."
    )
    archived = models.BooleanField(default=False)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["name"]
        constraints = [
            models.CheckConstraint(
                condition=Q(test_frequency_hz__isnull=True) | Q(test_frequency_hz__gt=0),
                name="fixture_test_frequency_positive",
            ),
            models.CheckConstraint(
                condition=Q(test_level_v__isnull=True) | Q(test_level_v__gt=0),
                name="fixture_test_level_positive",
            ),
            models.CheckConstraint(
                condition=Q(nominal_inductance_h__isnull=True) | Q(nominal_inductance_h__gt=0),
                name="fixture_inductance_positive",
            ),
            models.CheckConstraint(
                condition=Q(coupling_f__isnull=True) | Q(coupling_f__gt=0),
                name="fixture_coupling_positive",
            ),
        ]

    def __str__(self) -> str:
        return self.name

    def get_absolute_url(self) -> str:
        return reverse("fixture-detail", args=[self.pk])


class Calibration(models.Model):
    """Dated reference readings of an oscillator fixture and the L, C_stray fitted to them."""

    fixture = models.ForeignKey(Fixture, on_delete=models.PROTECT, related_name="calibrations")
    measured_at = models.DateTimeField()
    ref_capacitance_f = models.JSONField(help_text="Reference capacitances [F]; 0 = open.")
    freq_hz = models.JSONField(help_text="Oscillator frequency with each reference [Hz].")
    inductance_h = models.FloatField()
    stray_f = models.FloatField()
    covariance = models.JSONField(
        null=True, help_text="2×2 covariance of (L [H], C_stray [F]); null when undetermined."
    )
    residuals = models.JSONField(default=list, help_text="Measured − fitted frequency [Hz].")
    coupling_f = models.FloatField(null=True, blank=True)
    notes = models.TextField(blank=True)
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["fixture", "-measured_at"]
        constraints = [
            models.CheckConstraint(condition=Q(inductance_h__gt=0), name="cal_inductance_positive"),
            models.CheckConstraint(condition=Q(stray_f__gte=0), name="cal_stray_nonnegative"),
            models.UniqueConstraint(
                fields=["fixture", "measured_at"], name="cal_one_per_fixture_and_time"
            ),
        ]

    def __str__(self) -> str:
        return f"{self.fixture} calibration {self.measured_at:%Y-%m-%d %H:%M}"


class SweepKind(models.TextChoices):
    CV = "cv", "C–V (capacitance against bias)"
    FV = "fv", "f–V (oscillator frequency against bias)"
    ZF = "zf", "Z–f (impedance against test frequency, at one bias)"


class Illumination(models.TextChoices):
    DARK = "dark", "dark"
    AMBIENT = "ambient", "ambient light"
    ILLUMINATED = "illuminated", "illuminated"


def raw_upload_path(instance: Sweep, filename: str) -> str:
    # Content-addressed folder: the same bytes always land in the same place.
    sha = instance.raw_sha256
    return f"raw/{sha[:2]}/{sha}/{filename}"


class Sweep(models.Model):
    """One bias sweep of one unit on one fixture; the raw file is kept byte for byte."""

    unit = models.ForeignKey(Unit, on_delete=models.PROTECT, related_name="sweeps")
    fixture = models.ForeignKey(Fixture, on_delete=models.PROTECT, related_name="sweeps")
    kind = models.CharField(max_length=8, choices=SweepKind.choices)
    calibration = models.ForeignKey(
        Calibration, null=True, blank=True, on_delete=models.PROTECT, related_name="sweeps"
    )
    raw_file = models.FileField(upload_to=raw_upload_path, max_length=300)
    raw_name = models.CharField(max_length=255)
    raw_sha256 = models.CharField(max_length=64)
    raw_size = models.PositiveBigIntegerField()
    # Parsed points, SI: bias_v, capacitance_f, and for oscillator sweeps frequency_hz and
    # capacitance_sigma_f; extras hold other columns (conductance, Q, ...).
    points = models.JSONField()
    points_sha256 = models.CharField(max_length=64)
    n_points = models.PositiveIntegerField()
    bias_min_v = models.FloatField()
    bias_max_v = models.FloatField()
    bias_negated = models.BooleanField(default=False)
    temperature_c = models.FloatField(default=25.0)
    illumination = models.CharField(
        max_length=16, choices=Illumination.choices, default=Illumination.DARK
    )
    test_frequency_hz = models.FloatField(null=True, blank=True)
    test_level_v = models.FloatField(null=True, blank=True)
    operator = models.CharField(max_length=80, blank=True)
    measured_at = models.DateTimeField(null=True, blank=True)
    notes = models.JSONField(default=list, help_text="What the import noticed (plain words).")
    metadata = models.JSONField(default=dict, blank=True)
    archived = models.BooleanField(default=False)
    uploaded_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    uploaded_at = models.DateTimeField(auto_now_add=True)
    current_fit = models.ForeignKey(
        "Fit", null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    # A C–V sweep derived from a bias series of impedance sweeps links to them here.
    derived_from = models.ManyToManyField(
        "self", symmetrical=False, blank=True, related_name="derivatives"
    )

    class Meta:
        ordering = ["-uploaded_at", "-id"]
        constraints = [
            models.UniqueConstraint(
                fields=["unit", "raw_sha256"], name="sweep_raw_unique_per_unit"
            ),
            models.CheckConstraint(
                condition=Q(temperature_c__gte=-273.15) & Q(temperature_c__lte=500),
                name="sweep_temperature_physical",
            ),
            models.CheckConstraint(condition=Q(n_points__gte=1), name="sweep_has_points"),
            models.CheckConstraint(
                condition=Q(bias_min_v__lte=models.F("bias_max_v")), name="sweep_bias_ordered"
            ),
            models.CheckConstraint(
                condition=Q(test_frequency_hz__isnull=True) | Q(test_frequency_hz__gt=0),
                name="sweep_test_frequency_positive",
            ),
        ]
        indexes = [models.Index(fields=["unit", "illumination", "temperature_c"])]

    def __str__(self) -> str:
        return f"sweep {self.pk} of {self.unit}"

    def get_absolute_url(self) -> str:
        return reverse("sweep-detail", args=[self.pk])

    @property
    def exceeds_rating(self) -> bool:
        rated = self.unit.lot.part.rated_reverse_v
        return rated is not None and self.bias_max_v > rated


class FitOrigin(models.TextChoices):
    UPLOAD = "upload", "upload"
    REFIT = "refit", "refit"
    API = "api", "API"
    COMMAND = "command", "command"
    LOT = "lot", "lot recomputation"


class ImmutableError(Exception):
    """Raised when code tries to change a stored fit version."""


class FitVersion(models.Model):
    """What every stored fit version records besides its parameters, and its immutability."""

    converged = models.BooleanField()
    message = models.CharField(max_length=300, blank=True)
    warnings = models.JSONField(default=list)
    fitter_version = models.CharField(max_length=40)
    input_sha256 = models.CharField(max_length=64)
    origin = models.CharField(max_length=12, choices=FitOrigin.choices)
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        abstract = True

    def save(self, *args, **kwargs):
        if self.pk is not None and not self._state.adding:
            raise ImmutableError("a fit version is never changed; refit to write a new version")
        super().save(*args, **kwargs)


class Fit(FitVersion):
    """An immutable, numbered version of a junction model of a sweep or of a lot summary."""

    sweep = models.ForeignKey(
        Sweep, null=True, blank=True, on_delete=models.PROTECT, related_name="fits"
    )
    lot_summary = models.ForeignKey(
        "quality.LotSummary", null=True, blank=True, on_delete=models.CASCADE, related_name="fits"
    )
    version = models.PositiveIntegerField()
    model = models.CharField(max_length=20)
    params = models.JSONField()
    stderr = models.JSONField()
    correlation = models.JSONField()
    # Parameters copied into columns so search can filter and rank in the database.
    cjo = models.FloatField()
    vj = models.FloatField()
    m = models.FloatField()
    cp = models.FloatField(default=0.0)
    rms_rel = models.FloatField()
    r2 = models.FloatField(null=True)
    aicc = models.FloatField(null=True)
    n_points = models.PositiveIntegerField()
    bias_min_v = models.FloatField()
    bias_max_v = models.FloatField()

    class Meta:
        ordering = ["-version"]
        constraints = [
            models.CheckConstraint(
                condition=(Q(sweep__isnull=False) & Q(lot_summary__isnull=True))
                | (Q(sweep__isnull=True) & Q(lot_summary__isnull=False)),
                name="fit_has_one_subject",
            ),
            models.UniqueConstraint(
                fields=["sweep", "version"],
                condition=Q(sweep__isnull=False),
                name="fit_version_unique_per_sweep",
            ),
            models.UniqueConstraint(
                fields=["lot_summary", "version"],
                condition=Q(lot_summary__isnull=False),
                name="fit_version_unique_per_lot_summary",
            ),
            models.CheckConstraint(condition=Q(version__gte=1), name="fit_version_from_one"),
            models.CheckConstraint(
                condition=Q(cjo__gt=0) & Q(vj__gt=0) & Q(m__gt=0) & Q(cp__gte=0),
                name="fit_params_physical",
            ),
        ]

    def __str__(self) -> str:
        subject = (
            f"sweep {self.sweep_id}" if self.sweep_id else f"lot summary {self.lot_summary_id}"
        )
        return f"fit v{self.version} of {subject}"

    def get_absolute_url(self) -> str:
        return reverse("fit-detail", args=[self.pk])


class ImpedanceFit(FitVersion):
    """An immutable, numbered version of the series R–L–C equivalent of an impedance sweep."""

    sweep = models.ForeignKey(Sweep, on_delete=models.PROTECT, related_name="impedance_fits")
    version = models.PositiveIntegerField()
    rs_ohm = models.FloatField(help_text="Series resistance [ohm].")
    ls_h = models.FloatField(help_text="Series inductance [H].")
    cs_f = models.FloatField(help_text="Series capacitance [F].")
    srf_hz = models.FloatField(null=True, help_text="Self-resonant frequency [Hz]; null if Ls = 0.")
    stderr = models.JSONField(help_text="Standard errors of rs_ohm, ls_h, cs_f (SI).")
    correlation = models.JSONField()
    rms_rel = models.FloatField()
    n_points = models.PositiveIntegerField()
    frequency_min_hz = models.FloatField()
    frequency_max_hz = models.FloatField()

    class Meta:
        ordering = ["-version"]
        constraints = [
            models.UniqueConstraint(
                fields=["sweep", "version"], name="impedance_fit_version_unique_per_sweep"
            ),
            models.CheckConstraint(
                condition=Q(version__gte=1), name="impedance_fit_version_from_one"
            ),
            models.CheckConstraint(
                condition=Q(rs_ohm__gte=0) & Q(ls_h__gte=0) & Q(cs_f__gt=0),
                name="impedance_fit_params_physical",
            ),
        ]

    def __str__(self) -> str:
        return f"impedance fit v{self.version} of sweep {self.sweep_id}"

    def as_physics(self):
        """The stored fit as :class:`labdb.physics.impedance.SeriesRLCFit`."""
        from labdb.physics.impedance import SeriesRLCFit

        return SeriesRLCFit.from_dict(
            {
                "rs_ohm": self.rs_ohm,
                "ls_h": self.ls_h,
                "cs_f": self.cs_f,
                "stderr": self.stderr,
                "correlation": self.correlation,
                "rms_rel": self.rms_rel,
                "n_points": self.n_points,
                "frequency_min_hz": self.frequency_min_hz,
                "frequency_max_hz": self.frequency_max_hz,
                "converged": self.converged,
                "message": self.message,
                "warnings": self.warnings,
                "fitter_version": self.fitter_version,
            }
        )
