"""The API's own pages: schema, docs, and a JSON 404 for paths that name no endpoint."""

from __future__ import annotations

from django.urls import Resolver404, resolve
from drf_spectacular.views import SpectacularAPIView, SpectacularSwaggerSplitView
from rest_framework import exceptions
from rest_framework.permissions import AllowAny
from rest_framework.views import APIView

from labdb.api.views.base import ApiViewMixin


class SchemaView(SpectacularAPIView):
    """OpenAPI 3 description of the API; open to anyone (it describes, it holds no data)."""

    permission_classes = [AllowAny]


class DocsView(SpectacularSwaggerSplitView):
    """Interactive docs; the page's assets come from the installed package, never a CDN."""

    permission_classes = [AllowAny]


class NoEndpointView(ApiViewMixin, APIView):
    """Any path under /api/v1/ that names no endpoint: 404 in the API's error shape."""

    schema = None
    permission_classes = [AllowAny]

    def _missing(self, request, *args, **kwargs):
        hint = ""
        if not request.path.endswith("/"):
            try:
                match = resolve(request.path + "/")
            except Resolver404:
                match = None
            if match is not None and match.url_name != "no-endpoint":
                hint = f"; did you mean {request.path}/ ?"
        raise exceptions.NotFound(f"no endpoint at {request.path}{hint}")

    get = post = put = patch = delete = head = options = _missing
