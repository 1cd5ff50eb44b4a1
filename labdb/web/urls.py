"""URLs of the pages."""

from django.urls import path

from labdb.web.views import catalog, dashboard, fixtures, quality, search, sweeps, tank, upload

urlpatterns = [
    path("", dashboard.dashboard, name="dashboard"),
    path("parts/", catalog.part_list, name="part-list"),
    # Before part-detail: its <path:> would otherwise swallow ".../quality-settings/".
    path(
        "parts/<path:part_number>/quality-settings/",
        quality.part_settings,
        name="part-quality-settings",
    ),
    path("parts/<path:part_number>/", catalog.part_detail, name="part-detail"),
    path("lots/<int:pk>/", catalog.lot_detail, name="lot-detail"),
    path("units/<int:pk>/", catalog.unit_detail, name="unit-detail"),
    path("sweeps/<int:pk>/", sweeps.sweep_detail, name="sweep-detail"),
    path("sweeps/<int:pk>/raw", sweeps.sweep_raw, name="sweep-raw"),
    path("fits/<int:pk>/", sweeps.fit_detail, name="fit-detail"),
    path("fixtures/", fixtures.fixture_list, name="fixture-list"),
    path("fixtures/<int:pk>/", fixtures.fixture_detail, name="fixture-detail"),
    path("upload/", upload.upload, name="upload"),
    path("search/", search.search, name="search"),
    path("tank/", tank.tank, name="tank"),
    path("flags/", quality.flag_list, name="flag-list"),
    path("flags/<int:pk>/review", quality.flag_review, name="flag-review"),
    path("lots/compare/", quality.lot_compare, name="lot-compare"),
]
