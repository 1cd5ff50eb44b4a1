"""App config for quality: lot summaries and flags."""

from django.apps import AppConfig


class QualityConfig(AppConfig):
    name = "labdb.quality"
    label = "quality"

    def ready(self) -> None:
        from labdb.quality import signals  # noqa: F401  (connects the lot-edit receivers)
