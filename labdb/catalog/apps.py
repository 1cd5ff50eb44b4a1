"""App config for the catalog: parts, lots, units."""

from django.apps import AppConfig


class CatalogConfig(AppConfig):
    name = "labdb.catalog"
    label = "catalog"
