"""One error shape for every 4xx: ``{"errors": [{"field" or "line"/"column", "message"}]}``.

Domain rejections (located problems), ingest parse errors and validation errors all become
lists of located messages here, at the boundary; nothing below this module knows HTTP.
"""

from __future__ import annotations

from typing import Any

from django.core.exceptions import PermissionDenied as DjangoPermissionDenied
from django.core.exceptions import RequestDataTooBig
from django.core.exceptions import ValidationError as DjangoValidationError
from django.http import Http404
from rest_framework import exceptions, status
from rest_framework.response import Response
from rest_framework.settings import api_settings
from rest_framework.views import set_rollback

from labdb.ingest import ParseError as IngestParseError
from labdb.measurements.errors import Problem, Rejected


class Conflict(exceptions.APIException):
    """The request is fine but the data is not in a state to answer it (e.g. no summary yet)."""

    status_code = status.HTTP_409_CONFLICT
    default_detail = "the data is not in a state to answer this request"
    default_code = "conflict"


class PayloadTooLarge(exceptions.APIException):
    status_code = status.HTTP_413_REQUEST_ENTITY_TOO_LARGE
    default_detail = "the upload is larger than this server accepts"
    default_code = "too_large"


def problem_entry(problem: Problem) -> dict[str, Any]:
    """A located problem as an error entry (only the places that are known)."""
    entry: dict[str, Any] = {}
    for key in ("field", "file", "line", "column"):
        value = getattr(problem, key)
        if value not in (None, ""):
            entry[key] = value
    entry["message"] = problem.message
    return entry


def issue_entry(issue) -> dict[str, Any]:
    """An ingest issue (file, line, column, message) as an error entry."""
    return problem_entry(
        Problem(issue.message, file=issue.file, line=issue.line, column=issue.column)
    )


def detail_entries(detail: Any, field: str | None = None) -> list[dict[str, Any]]:
    """Flatten DRF error detail (nested dicts and lists) into entries with dotted field paths."""
    if isinstance(detail, dict):
        out: list[dict[str, Any]] = []
        for key, value in detail.items():
            if key in (api_settings.NON_FIELD_ERRORS_KEY, "detail"):
                sub = field
            else:
                sub = f"{field}.{key}" if field else str(key)
            out += detail_entries(value, sub)
        return out
    if isinstance(detail, list):
        out = []
        for i, item in enumerate(detail):
            if isinstance(item, dict | list):
                out += detail_entries(item, f"{field}.{i}" if field else str(i))
            else:
                out += detail_entries(item, field)
        return out
    entry: dict[str, Any] = {"field": field} if field else {}
    entry["message"] = str(detail)
    return [entry]


def error_response(entries: list[dict[str, Any]], code: int, headers=None) -> Response:
    return Response({"errors": entries}, status=code, headers=headers)


def _as_api_exception(exc: Exception) -> exceptions.APIException | None:
    if isinstance(exc, exceptions.APIException):
        return exc
    if isinstance(exc, Http404):
        return exceptions.NotFound(str(exc) or "not found")
    if isinstance(exc, DjangoPermissionDenied):
        return exceptions.PermissionDenied(str(exc) or None)
    if isinstance(exc, RequestDataTooBig):
        return PayloadTooLarge()
    if isinstance(exc, DjangoValidationError):
        detail = exc.message_dict if hasattr(exc, "error_dict") else exc.messages
        return exceptions.ValidationError(detail)
    return None


def api_exception_handler(exc: Exception, context: dict) -> Response | None:
    """DRF exception handler (settings ``EXCEPTION_HANDLER``); None lets Django answer 500."""
    if isinstance(exc, Rejected):
        set_rollback()
        return error_response([problem_entry(p) for p in exc.problems], 400)
    if isinstance(exc, IngestParseError):
        set_rollback()
        return error_response([issue_entry(i) for i in exc.issues], 400)
    api_exc = _as_api_exception(exc)
    if api_exc is None:
        return None
    headers = {}
    if getattr(exc, "auth_header", None):
        headers["WWW-Authenticate"] = exc.auth_header
    wait = getattr(api_exc, "wait", None)
    if wait:
        headers["Retry-After"] = str(int(wait) or 1)
    set_rollback()
    code = api_exc.status_code
    if code == status.HTTP_401_UNAUTHORIZED:
        from labdb.api.throttling import FailedAuthThrottle

        request = context.get("request")
        if request is not None:
            FailedAuthThrottle().record(request)
    return error_response(detail_entries(api_exc.detail), code, headers)
