"""Admin access follows our roles: curators curate, everyone else stays out."""

from django.contrib import admin

from labdb.accounts.roles import CURATOR, has_role


class CuratorPermissions:
    """Curators may view, add, change and delete; deletion stays behind PROTECT rules."""

    def has_module_permission(self, request):
        return has_role(request.user, CURATOR)

    def has_view_permission(self, request, obj=None):
        return has_role(request.user, CURATOR)

    def has_add_permission(self, request, obj=None):
        return has_role(request.user, CURATOR)

    def has_change_permission(self, request, obj=None):
        return has_role(request.user, CURATOR)

    def has_delete_permission(self, request, obj=None):
        return has_role(request.user, CURATOR)


class CuratorAdmin(CuratorPermissions, admin.ModelAdmin):
    """A model admin open to curators."""


class CuratorTabularInline(CuratorPermissions, admin.TabularInline):
    """An inline open to curators."""


def curator_site_permission(request) -> bool:
    return request.user.is_active and has_role(request.user, CURATOR)


admin.site.has_permission = curator_site_permission
admin.site.site_header = "labdb curation"
admin.site.site_title = "labdb curation"
