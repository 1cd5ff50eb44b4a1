"""App config for quality: lot summaries and flags."""

from django.apps import AppConfig


class QualityConfig(AppConfig):
    name = "labdb.quality"
    label = "quality"
