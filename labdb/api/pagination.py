"""Pagination: page numbers for the catalogue, cursors for sweeps and fits (they only grow)."""

from __future__ import annotations

from rest_framework.pagination import CursorPagination, PageNumberPagination


class CatalogPagination(PageNumberPagination):
    """``?page=N&page_size=M``; the catalogue is small and browsed, so page numbers fit."""

    page_size = 50
    page_size_query_param = "page_size"
    max_page_size = 500


class NewestFirstCursor(CursorPagination):
    """Opaque ``?cursor=`` links, newest first; stable while a bench keeps posting sweeps."""

    page_size = 50
    page_size_query_param = "page_size"
    max_page_size = 500
    ordering = "-id"


class VersionCursor(NewestFirstCursor):
    """A sweep's fit versions, newest version first."""

    ordering = "-version"
