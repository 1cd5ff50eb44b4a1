"""A Job: one unit of background work, its state, progress and result."""

from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q
from django.urls import reverse


class JobKind(models.TextChoices):
    IMPORT_ARCHIVE = "import_archive", "archive import"
    REFIT = "refit", "refit"
    RECOMPUTE_LOTS = "recompute_lots", "lot recomputation"


class JobState(models.TextChoices):
    QUEUED = "queued", "queued"
    RUNNING = "running", "running"
    DONE = "done", "done"
    FAILED = "failed", "failed"


TERMINAL = (JobState.DONE, JobState.FAILED)


class Job(models.Model):
    """Background work submitted by a user (or by the system when ``owner`` is empty).

    A job is claimed by setting ``state=running`` with a fresh ``claim`` token in one atomic
    UPDATE; only the holder of the current token may record progress or finish it, so a task
    redelivered after a worker loss never runs the same job twice at once.
    """

    kind = models.CharField(max_length=20, choices=JobKind.choices)
    owner = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    parent = models.ForeignKey(
        "self", null=True, blank=True, on_delete=models.CASCADE, related_name="children"
    )
    state = models.CharField(max_length=10, choices=JobState.choices, default=JobState.QUEUED)
    idempotency_key = models.CharField(max_length=80, unique=True)
    params = models.JSONField(default=dict, help_text="What to do (context, sweep ids, lot ids).")
    params_sha256 = models.CharField(max_length=64, db_index=True)
    staged_file = models.CharField(max_length=300, blank=True, help_text="Archive in storage.")
    filename = models.CharField(max_length=255, blank=True)
    done = models.PositiveIntegerField(default=0)
    total = models.PositiveIntegerField(null=True, blank=True)
    result = models.JSONField(default=dict, blank=True)
    error = models.TextField(blank=True)
    attempts = models.PositiveIntegerField(default=0)
    claim = models.CharField(max_length=32, blank=True)
    worker = models.CharField(max_length=120, blank=True)
    heartbeat_at = models.DateTimeField(null=True, blank=True)
    created_at = models.DateTimeField(auto_now_add=True)
    started_at = models.DateTimeField(null=True, blank=True)
    finished_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["-created_at", "-id"]
        indexes = [
            models.Index(fields=["owner", "-created_at"]),
            models.Index(fields=["state", "heartbeat_at"]),
        ]
        constraints = [
            models.CheckConstraint(
                condition=Q(total__isnull=True) | Q(done__lte=models.F("total")),
                name="job_progress_within_total",
            ),
        ]

    def __str__(self) -> str:
        return f"job {self.pk} ({self.get_kind_display()}, {self.state})"

    def get_absolute_url(self) -> str:
        return reverse("job-detail", args=[self.pk])

    @property
    def finished(self) -> bool:
        return self.state in TERMINAL

    @property
    def percent(self) -> int | None:
        if not self.total:
            return 100 if self.state == JobState.DONE else None
        return min(100, round(100 * self.done / self.total))
