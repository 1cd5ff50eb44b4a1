"""Flags: list and filter for everyone with a role; curators review them (PATCH)."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework import mixins, viewsets
from rest_framework.exceptions import ValidationError
from rest_framework.response import Response
from rest_framework.settings import api_settings

from labdb.accounts.roles import CURATOR
from labdb.api.filters import FlagFilter
from labdb.api.pagination import CatalogPagination
from labdb.api.serializers.flags import FlagReviewSerializer, FlagSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.quality.errors import ReviewRefused
from labdb.quality.models import Flag
from labdb.quality.services import review_flag


class FlagViewSet(
    ApiViewMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    viewsets.GenericViewSet,
):
    """Flags, newest first (by when the finding was first raised); unfiltered by default.

    A review goes through ``quality.services.review_flag``, so the audit trail records who
    reviewed and why, and a later recompute keeps the review.
    """

    queryset = Flag.objects.select_related("part", "lot", "unit", "reviewed_by").order_by(
        "-created_at", "-id"
    )
    serializer_class = FlagSerializer
    filterset_class = FlagFilter
    pagination_class = CatalogPagination
    write_role = CURATOR
    # Reviews are partial by nature; there is no PUT, and flags are made by recompute only.
    http_method_names = ["get", "patch", "head", "options"]

    @extend_schema(request=FlagReviewSerializer, responses=FlagSerializer)
    def partial_update(self, request, *args, **kwargs):
        flag = self.get_object()
        review = FlagReviewSerializer(data=request.data)
        review.is_valid(raise_exception=True)
        try:
            review_flag(
                flag, review.validated_data["state"], request.user, review.validated_data["note"]
            )
        except ReviewRefused as exc:
            field = exc.field or api_settings.NON_FIELD_ERRORS_KEY
            raise ValidationError({field: [exc.args[0]]}) from None
        return Response(FlagSerializer(self.get_queryset().get(pk=flag.pk)).data)
