"""Curators see every API token and can revoke one (e.g. a leaked key); keys are never shown."""

from django.contrib import admin

from labdb.accounts.admin_base import CuratorAdmin
from labdb.api.models import ApiToken
from labdb.api.tokens import revoke_token


@admin.action(description="Revoke selected tokens")
def revoke(modeladmin, request, queryset):
    for token in queryset:
        revoke_token(token)


@admin.register(ApiToken)
class ApiTokenAdmin(CuratorAdmin):
    list_display = ["prefix", "user", "name", "scope", "created_at", "last_used_at", "revoked_at"]
    list_filter = ["scope"]
    search_fields = ["prefix", "user__username", "name"]
    readonly_fields = [
        "user",
        "prefix",
        "key_sha256",
        "scope",
        "created_at",
        "last_used_at",
        "revoked_at",
    ]
    actions = [revoke]

    def has_add_permission(self, request, obj=None):
        return False  # tokens are minted by their owners (tokens page or mint_token)
