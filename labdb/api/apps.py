"""App config for the REST API."""

from django.apps import AppConfig


class ApiConfig(AppConfig):
    name = "labdb.api"
    label = "api"
    verbose_name = "REST API"

    def ready(self) -> None:
        # Registers the OpenAPI description of our token authentication with drf-spectacular.
        from labdb.api import schema  # noqa: F401
