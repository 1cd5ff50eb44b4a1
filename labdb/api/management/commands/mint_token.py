"""manage.py mint_token USER --scope read|write [--name N]: print a new personal API token."""

from __future__ import annotations

from django.contrib.auth import get_user_model
from django.core.management.base import BaseCommand, CommandError

from labdb.api.models import TokenScope
from labdb.api.tokens import mint_token


class Command(BaseCommand):
    help = "Mint a personal API token for USER and print its key (shown only this once)."

    def add_arguments(self, parser):
        parser.add_argument("user", help="username")
        parser.add_argument("--scope", choices=TokenScope.values, default=TokenScope.READ)
        parser.add_argument("--name", default="", help="what the token is for")

    def handle(self, *args, user: str, scope: str, name: str, **options):
        model = get_user_model()
        try:
            owner = model.objects.get(username=user)
        except model.DoesNotExist:
            raise CommandError(f"no user named {user!r}") from None
        if not owner.is_active:
            raise CommandError(f"user {user!r} is inactive; a token of theirs would not work")
        token, key = mint_token(owner, scope, name)
        # The key alone on stdout, so a script can capture it; the rest goes to stderr.
        self.stdout.write(key)
        self.stderr.write(
            f"minted {scope} token {token.prefix}… for {owner.username}; store the key now, "
            "it cannot be shown again"
        )
