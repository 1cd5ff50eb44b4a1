"""App config for the web pages."""

from django.apps import AppConfig


class WebConfig(AppConfig):
    name = "labdb.web"
    label = "web"
