"""Units: list, retrieve, create, update."""

from __future__ import annotations

from rest_framework import mixins, viewsets

from labdb.api.filters import UnitFilter
from labdb.api.pagination import CatalogPagination
from labdb.api.serializers.units import UnitSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.catalog.models import Unit


class UnitViewSet(
    ApiViewMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    viewsets.GenericViewSet,
):
    queryset = Unit.objects.select_related("lot__part")
    serializer_class = UnitSerializer
    filterset_class = UnitFilter
    pagination_class = CatalogPagination
