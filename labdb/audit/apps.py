"""App configuration of the audit trail; connects the model signals that write it."""

from django.apps import AppConfig


class AuditConfig(AppConfig):
    name = "labdb.audit"
    label = "audit"
    verbose_name = "Audit trail"
    default_auto_field = "django.db.models.BigAutoField"

    def ready(self) -> None:
        from labdb.audit import signals

        signals.connect()
