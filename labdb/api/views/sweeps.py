"""Sweeps: list, retrieve, record (bench file or JSON points), the raw file, fit versions."""

from __future__ import annotations

from django.conf import settings
from django.http import FileResponse
from django.shortcuts import get_object_or_404
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import extend_schema
from rest_framework import exceptions, generics, mixins, status, viewsets
from rest_framework.parsers import FormParser, JSONParser, MultiPartParser
from rest_framework.renderers import JSONRenderer
from rest_framework.response import Response
from rest_framework.views import APIView

from labdb.api.errors import PayloadTooLarge, problem_entry
from labdb.api.filters import FitVersionFilter, SweepFilter
from labdb.api.pagination import NewestFirstCursor, VersionCursor
from labdb.api.renderers import OctetStreamRenderer
from labdb.api.serializers.fits import FitSerializer
from labdb.api.serializers.sweeps import (
    SweepDetailSerializer,
    SweepSerializer,
    UploadResultSerializer,
)
from labdb.api.serializers.uploads import CONTEXT_FIELDS, SweepUploadSerializer
from labdb.api.views.base import ApiViewMixin
from labdb.measurements.errors import Rejected
from labdb.measurements.models import Fit, Sweep
from labdb.measurements.services import Outcome, SweepContext, record_file, record_points

_RELATED = ("unit__lot__part", "fixture", "current_fit")


class SweepViewSet(
    ApiViewMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    viewsets.GenericViewSet,
):
    queryset = Sweep.objects.select_related(*_RELATED)
    filterset_class = SweepFilter
    pagination_class = NewestFirstCursor
    parser_classes = [JSONParser, MultiPartParser, FormParser]

    def get_queryset(self):
        qs = super().get_queryset()
        if self.action == "list":
            # Lists never show points or metadata: leave the big JSON columns in the database.
            qs = qs.defer("points", "metadata", "notes")
        return qs

    def get_serializer_class(self):
        return SweepSerializer if self.action == "list" else SweepDetailSerializer

    @extend_schema(
        request={
            "multipart/form-data": SweepUploadSerializer,
            "application/json": SweepUploadSerializer,
        },
        responses={201: UploadResultSerializer, 200: UploadResultSerializer},
    )
    def create(self, request, *args, **kwargs):
        """Record a sweep: 201 with the sweep and its fit, 200 with ``duplicate: true`` if the
        same file is already stored for the unit."""
        form = SweepUploadSerializer(data=request.data)
        form.is_valid(raise_exception=True)
        data = form.validated_data
        ctx = SweepContext(**{k: data[k] for k in CONTEXT_FIELDS if k in data}, model=data["model"])
        if "file" in data:
            upload = data["file"]
            if upload.size > settings.UPLOAD_MAX_BYTES:
                raise PayloadTooLarge(
                    f"'{upload.name}' holds {upload.size} bytes; the limit is "
                    f"{settings.UPLOAD_MAX_BYTES} (UPLOAD_MAX_BYTES)"
                )
            outcomes = record_file(
                upload.read(), upload.name or "upload", ctx, user=request.user, origin="api"
            )
        else:
            pts = data["points"]
            outcomes = record_points(
                ctx,
                pts["bias_v"],
                capacitance_f=pts.get("capacitance_f"),
                frequency_hz=pts.get("frequency_hz"),
                user=request.user,
                origin="api",
            )
        return self.upload_response(outcomes)

    def upload_response(self, outcomes: list[Outcome]) -> Response:
        return upload_result(outcomes)


def upload_result(outcomes: list[Outcome]) -> Response:
    """201 with the first recorded sweep and what else happened (200 when nothing was new);
    also what ``units/{id}/derive-cv`` answers."""
    recorded = [o for o in outcomes if o.status in ("stored", "duplicate")]
    rejected = [o for o in outcomes if o.status == "rejected"]
    if not recorded:
        raise Rejected([p for o in rejected for p in o.problems])
    stored = any(o.status == "stored" for o in recorded)
    sweep = Sweep.objects.select_related(*_RELATED).get(pk=recorded[0].sweep.pk)
    body = dict(SweepDetailSerializer(sweep).data)
    body["duplicate"] = not stored
    body["recorded"] = [
        {"source": o.source, "status": o.status, "sweep": o.sweep.pk} for o in recorded
    ]
    body["rejected"] = [
        {"source": o.source, "errors": [problem_entry(p) for p in o.problems]} for o in rejected
    ]
    return Response(body, status=status.HTTP_201_CREATED if stored else status.HTTP_200_OK)


class SweepRawView(ApiViewMixin, APIView):
    """The raw file exactly as uploaded."""

    renderer_classes = [JSONRenderer, OctetStreamRenderer]

    @extend_schema(responses={(200, "application/octet-stream"): OpenApiTypes.BINARY})
    def get(self, request, pk: int):
        sweep = get_object_or_404(Sweep, pk=pk)
        try:
            handle = sweep.raw_file.open("rb")
        except (FileNotFoundError, ValueError):
            raise exceptions.NotFound(
                f"the raw file of sweep {pk} is missing from storage"
            ) from None
        return FileResponse(
            handle,
            as_attachment=True,
            filename=sweep.raw_name,
            content_type="application/octet-stream",
        )


class SweepFitsView(ApiViewMixin, generics.ListAPIView):
    """Every fit version of a sweep, newest first."""

    serializer_class = FitSerializer
    pagination_class = VersionCursor
    filterset_class = FitVersionFilter

    def get_queryset(self):
        if getattr(self, "swagger_fake_view", False):  # schema generation: no request
            return Fit.objects.none()
        sweep = get_object_or_404(Sweep.objects.only("id"), pk=self.kwargs["pk"])
        return sweep.fits.all()

    def list(self, request, *args, **kwargs):
        response = super().list(request, *args, **kwargs)
        wanted = request.query_params.get("version")
        if wanted and not response.data["results"]:
            raise exceptions.NotFound(f"sweep {self.kwargs['pk']} has no fit version {wanted}")
        return response
