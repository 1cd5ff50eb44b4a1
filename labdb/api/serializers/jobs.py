"""Background jobs: state, progress and result of one job."""

from __future__ import annotations

from rest_framework import serializers

from labdb.jobs.services import job_status


class JobSerializer(serializers.Serializer):
    """What the job page polls, over the API: the same fields as ``/jobs/<id>/status``."""

    id = serializers.IntegerField()
    kind = serializers.ChoiceField(choices=["import_archive", "refit", "recompute_lots"])
    kind_label = serializers.CharField()
    state = serializers.ChoiceField(choices=["queued", "running", "done", "failed"])
    done = serializers.IntegerField(help_text="Items finished (files of an archive, sweeps).")
    total = serializers.IntegerField(allow_null=True, help_text="Items in all; null until known.")
    percent = serializers.IntegerField(allow_null=True)
    attempts = serializers.IntegerField(help_text="Runs started; above 1 after a worker loss.")
    filename = serializers.CharField(allow_blank=True)
    created_at = serializers.DateTimeField()
    started_at = serializers.DateTimeField(allow_null=True)
    finished_at = serializers.DateTimeField(allow_null=True)
    result = serializers.JSONField(help_text="Counts, per-file outcomes and errors.")
    error = serializers.CharField(allow_blank=True)
    finished = serializers.BooleanField()

    def to_representation(self, instance):
        return job_status(instance)
