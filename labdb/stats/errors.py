"""Exception raised by the statistics library, and the input checks that raise it."""

from __future__ import annotations

from typing import Any

import numpy as np


class StatsInputError(ValueError):
    """Input that no honest statistic can use (too few points, NaN, a p-value above 1, ...).

    The message names the bad argument (and the index of the bad element where there is one)
    and says what would be acceptable. It subclasses ValueError so callers that only know the
    standard library can still catch it.
    """


def finite_1d(x: Any, name: str, min_size: int = 1) -> np.ndarray:
    """Return ``x`` as a float 1-D array after checking it is finite and long enough.

    Parameters
    ----------
    x : array_like, shape (n,)
        Values in any unit; the unit is the caller's.
    name : str
        Argument name used in the error message.
    min_size : int, optional
        Smallest acceptable ``n``.

    Returns
    -------
    ndarray, shape (n,)
        The values as float64, same unit as ``x``.

    Raises
    ------
    StatsInputError
        When ``x`` is not numeric, not 1-D, shorter than ``min_size`` or holds NaN/inf.
    """
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError) as exc:
        raise StatsInputError(f"{name}: expected a sequence of numbers ({exc})") from None
    if arr.ndim != 1:
        raise StatsInputError(f"{name}: expected a 1-D sequence, got shape {arr.shape}")
    if arr.size < min_size:
        raise StatsInputError(
            f"{name}: needs at least {min_size} value(s), got {arr.size}",
        )
    bad = np.flatnonzero(~np.isfinite(arr))
    if bad.size:
        i = int(bad[0])
        raise StatsInputError(
            f"{name}[{i}] is {arr[i]}; every value must be a finite number "
            f"({bad.size} non-finite value(s) in all)",
        )
    return arr


def finite_scalar(value: Any, name: str) -> float:
    """Return ``value`` as a finite float, or raise StatsInputError naming ``name``."""
    try:
        out = float(value)
    except (TypeError, ValueError):
        raise StatsInputError(f"{name}: expected a number, got {value!r}") from None
    if not np.isfinite(out):
        raise StatsInputError(f"{name} is {out}; it must be a finite number")
    return out
