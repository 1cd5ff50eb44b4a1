"""The audit trail in the admin: read-only, for curators."""

from django.contrib import admin

from labdb.accounts.roles import CURATOR, has_role
from labdb.audit.models import AuditEvent


@admin.register(AuditEvent)
class AuditEventAdmin(admin.ModelAdmin):
    list_display = ["at", "actor_name", "action", "object_type", "object_id", "summary"]
    list_filter = ["action", "object_type"]
    search_fields = ["actor_name", "object_id", "summary"]

    def has_module_permission(self, request):
        return has_role(request.user, CURATOR)

    def has_view_permission(self, request, obj=None):
        return has_role(request.user, CURATOR)

    # The trail is append-only: nobody adds, edits or deletes events by hand.
    def has_add_permission(self, request):
        return False

    def has_change_permission(self, request, obj=None):
        return False

    def has_delete_permission(self, request, obj=None):
        return False
