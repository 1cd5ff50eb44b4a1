"""Parts: list, retrieve by part number; curators create and change them."""

from __future__ import annotations

from rest_framework import mixins, viewsets

from labdb.accounts.roles import CURATOR
from labdb.api.filters import PartFilter
from labdb.api.pagination import CatalogPagination
from labdb.api.serializers.parts import PartSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.catalog.models import Part


class PartViewSet(
    ApiViewMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    viewsets.GenericViewSet,
):
    """Part settings (rating, reference window, spec limits) drive flags: curators edit them."""

    queryset = Part.objects.all()
    serializer_class = PartSerializer
    filterset_class = PartFilter
    pagination_class = CatalogPagination
    lookup_field = "part_number"
    lookup_value_regex = "[^/]+"
    write_role = CURATOR

    def perform_create(self, serializer):
        serializer.save(created_by=self.request.user)
