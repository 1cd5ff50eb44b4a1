"""Search's public operations: the page, the API and scripts call these two functions.

- :func:`search_parts` — parts ranked by fitted swing over a bias window, one page.
- :func:`find_tanks` — parts and lots that tune a given tank across a band.

Both take a query dataclass (SI units), validate it first and raise
:class:`~labdb.search.errors.SearchInputError` naming every bad parameter.
"""

from __future__ import annotations

from labdb.search.parts import search_parts
from labdb.search.tank import find_tanks

__all__ = ["find_tanks", "search_parts"]
