"""Part search: the search page's parameters in SI units; the ranked page as JSON."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework.exceptions import ValidationError
from rest_framework.response import Response
from rest_framework.views import APIView

from labdb.api.serializers.common import json_safe
from labdb.api.serializers.search import SearchPageSerializer, SearchParams
from labdb.api.views.base import ApiViewMixin
from labdb.physics import PhysicsInputError
from labdb.search.errors import SearchInputError
from labdb.search.queries import SearchQuery
from labdb.search.services import search_parts


def refused(exc: SearchInputError | PhysicsInputError) -> ValidationError:
    """A refused query as a 400 naming each parameter (same names as the query's fields)."""
    if isinstance(exc, PhysicsInputError):
        return ValidationError([str(exc)])
    detail: dict[str, list[str]] = {}
    for problem in exc.problems:
        detail.setdefault(problem.field, []).append(problem.message)
    return ValidationError(detail)


class SearchView(ApiViewMixin, APIView):
    """Parts ranked by fitted swing C(V1)/C(V2) over a reverse-bias window, one page.

    Parameters are ``SearchQuery``'s (SI: V, F, °C); leave both V1 and V2 out to judge each
    part over its own reference window. Types and ranges are checked first, then the query
    itself (signs, order of the window's ends); every refused parameter is named.
    """

    @extend_schema(parameters=[SearchParams], responses=SearchPageSerializer)
    def get(self, request):
        params = SearchParams(data=request.query_params)
        params.is_valid(raise_exception=True)
        try:
            page = search_parts(SearchQuery(**params.validated_data))
        except (SearchInputError, PhysicsInputError) as exc:
            raise refused(exc) from None
        body = SearchPageSerializer(page, context={"request": request}).data
        return Response(json_safe(body))
