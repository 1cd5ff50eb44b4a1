"""Fixtures: list, retrieve, create, update (members, as on the fixtures page)."""

from __future__ import annotations

from rest_framework import mixins, viewsets

from labdb.api.filters import FixtureFilter
from labdb.api.pagination import CatalogPagination
from labdb.api.serializers.fixtures import FixtureSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.measurements.models import Fixture


class FixtureViewSet(
    ApiViewMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    viewsets.GenericViewSet,
):
    queryset = Fixture.objects.all()
    serializer_class = FixtureSerializer
    filterset_class = FixtureFilter
    pagination_class = CatalogPagination
