"""App config for accounts: roles, login."""

from django.apps import AppConfig


class AccountsConfig(AppConfig):
    name = "labdb.accounts"
    label = "accounts"
