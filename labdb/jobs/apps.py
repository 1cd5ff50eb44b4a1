"""App configuration of the background jobs."""

from django.apps import AppConfig


class JobsConfig(AppConfig):
    name = "labdb.jobs"
    label = "jobs"
    verbose_name = "Background jobs"
