"""URLs of the job pages and their JSON status."""

from django.urls import path

from labdb.jobs import views

urlpatterns = [
    path("", views.job_list, name="job-list"),
    path("<int:pk>/", views.job_detail, name="job-detail"),
    path("<int:pk>/status", views.job_status_json, name="job-status"),
]
