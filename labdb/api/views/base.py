"""What every API view shares: role permissions and the upload size cap."""

from __future__ import annotations

from django.conf import settings
from rest_framework.renderers import BrowsableAPIRenderer, JSONRenderer
from rest_framework.response import Response

from labdb.accounts.roles import MEMBER, VIEWER
from labdb.api.errors import PayloadTooLarge


class ApiViewMixin:
    """Mixed into every API view. Reading needs ``read_role``, changing needs ``write_role``."""

    read_role = VIEWER
    write_role = MEMBER

    def initial(self, request, *args, **kwargs):
        super().initial(request, *args, **kwargs)
        # Refuse an oversized body from its declared length, before anything parses it.
        if request.method in ("POST", "PUT", "PATCH"):
            try:
                length = int(request.META.get("CONTENT_LENGTH") or 0)
            except ValueError:
                length = 0
            if length > settings.UPLOAD_MAX_BYTES:
                raise PayloadTooLarge(
                    f"the request holds {length} bytes; this server accepts at most "
                    f"{settings.UPLOAD_MAX_BYTES} (UPLOAD_MAX_BYTES)"
                )

    def finalize_response(self, request, response, *args, **kwargs):
        # Text and binary endpoints (SPICE cards, raw files) still answer errors in JSON.
        if isinstance(response, Response) and response.status_code >= 400:
            renderer = getattr(request, "accepted_renderer", None)
            if not isinstance(renderer, JSONRenderer | BrowsableAPIRenderer):
                request.accepted_renderer = JSONRenderer()
                request.accepted_media_type = JSONRenderer.media_type
        return super().finalize_response(request, response, *args, **kwargs)
