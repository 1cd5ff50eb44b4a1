"""URLs of the REST API, mounted at /api/v1/.

Every view here is exempt from LoginRequiredMiddleware: DRF authenticates by session or
token itself and answers 401 in JSON instead of redirecting to the login page.
"""

from __future__ import annotations

from django.urls import URLPattern, URLResolver, path, re_path
from rest_framework.routers import DefaultRouter

from labdb.api.views import (
    calibrations,
    fits,
    fixtures,
    flags,
    impedance,
    jobs,
    lots,
    meta,
    parts,
    search,
    sweeps,
    tank,
    units,
)

app_name = "api"


class _Router(DefaultRouter):
    include_format_suffixes = False  # one form per resource; ?format= still works


router = _Router()
router.register("parts", parts.PartViewSet, basename="part")
router.register("lots", lots.LotViewSet, basename="lot")
router.register("units", units.UnitViewSet, basename="unit")
router.register("fixtures", fixtures.FixtureViewSet, basename="fixture")
router.register("calibrations", calibrations.CalibrationViewSet, basename="calibration")
router.register("sweeps", sweeps.SweepViewSet, basename="sweep")
router.register("flags", flags.FlagViewSet, basename="flag")

urlpatterns = [
    path("schema/", meta.SchemaView.as_view(), name="schema"),
    path("docs/", meta.DocsView.as_view(url_name="api:schema"), name="docs"),
    path("sweeps/<int:pk>/raw", sweeps.SweepRawView.as_view(), name="sweep-raw"),
    path("sweeps/<int:pk>/fits/", sweeps.SweepFitsView.as_view(), name="sweep-fits"),
    path("fits/<int:pk>/", fits.FitDetailView.as_view(), name="fit-detail"),
    path("fits/<int:pk>/spice", fits.FitSpiceView.as_view(), name="fit-spice"),
    path("lots/<int:pk>/spice", lots.LotSpiceView.as_view(), name="lot-spice"),
    path("lots/<int:pk>/summary", lots.LotSummaryView.as_view(), name="lot-summary"),
    path("jobs/<int:pk>/", jobs.JobDetailView.as_view(), name="job-detail"),
    path(
        "sweeps/<int:pk>/impedance", impedance.SweepImpedanceView.as_view(), name="sweep-impedance"
    ),
    path(
        "sweeps/<int:pk>/impedance-fits/",
        impedance.SweepImpedanceFitsView.as_view(),
        name="sweep-impedance-fits",
    ),
    path("units/<int:pk>/derive-cv", impedance.UnitDeriveCvView.as_view(), name="unit-derive-cv"),
    path("units/<int:pk>/q", impedance.UnitQView.as_view(), name="unit-q"),
    path("search/", search.SearchView.as_view(), name="search"),
    path("tank/", tank.TankView.as_view(), name="tank"),
    *router.urls,
    re_path(r"^.*$", meta.NoEndpointView.as_view(), name="no-endpoint"),
]


def _exempt_from_login(patterns) -> None:
    for entry in patterns:
        if isinstance(entry, URLResolver):
            _exempt_from_login(entry.url_patterns)
        elif isinstance(entry, URLPattern):
            # What django.contrib.auth.decorators.login_not_required sets.
            entry.callback.login_required = False


_exempt_from_login(urlpatterns)
