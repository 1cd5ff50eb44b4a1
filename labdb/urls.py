"""Top-level URL configuration."""

from django.contrib import admin
from django.urls import include, path

from labdb.jobs.health import healthz

urlpatterns = [
    path("admin/", admin.site.urls),
    path("accounts/", include("labdb.accounts.urls")),
    path("api/v1/", include("labdb.api.urls")),
    path("account/tokens/", include("labdb.api.pages")),
    path("jobs/", include("labdb.jobs.urls")),
    path("audit/", include("labdb.audit.urls")),
    path("healthz", healthz, name="healthz"),
    path("", include("labdb.web.urls")),
]
