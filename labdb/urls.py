"""Top-level URL configuration."""

from django.contrib import admin
from django.urls import include, path

urlpatterns = [
    path("admin/", admin.site.urls),
    path("accounts/", include("labdb.accounts.urls")),
    path("", include("labdb.web.urls")),
]
