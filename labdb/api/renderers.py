"""Renderers for the endpoints that answer text (SPICE cards) or bytes (raw files).

Those views return their body directly; the renderers are here so content negotiation
accepts ``text/plain`` and ``application/octet-stream`` and so errors still render.
"""

from __future__ import annotations

import json

from rest_framework.renderers import BaseRenderer


class _ErrorsAsJson(BaseRenderer):
    charset = "utf-8"

    def render(self, data, accepted_media_type=None, renderer_context=None):
        if isinstance(data, bytes | str):
            return data
        # An error answer ({"errors": [...]}) on a text endpoint: still readable JSON.
        return json.dumps(data, ensure_ascii=False).encode("utf-8")


class PlainTextRenderer(_ErrorsAsJson):
    media_type = "text/plain"
    format = "txt"


class OctetStreamRenderer(_ErrorsAsJson):
    media_type = "application/octet-stream"
    format = "bin"
    charset = None
