"""URL of the audit page (mounted at /audit/)."""

from django.urls import path

from labdb.audit import views

urlpatterns = [path("", views.audit_list, name="audit-list")]
