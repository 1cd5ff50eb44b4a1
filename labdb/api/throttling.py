"""Throttles: writes per user, and failed authentications per client address."""

from __future__ import annotations

from rest_framework.settings import api_settings
from rest_framework.throttling import SimpleRateThrottle, UserRateThrottle


class _LiveRates:
    """Read the rate from the settings on every request, so a settings change applies at once."""

    scope: str

    def get_rate(self):
        return api_settings.DEFAULT_THROTTLE_RATES.get(self.scope)


class WriteRateThrottle(_LiveRates, UserRateThrottle):
    """Limits POST/PUT/PATCH/DELETE per user (``write`` rate); reads are not throttled."""

    scope = "write"

    def allow_request(self, request, view) -> bool:
        if request.method in ("GET", "HEAD", "OPTIONS"):
            return True
        return super().allow_request(request, view)


class FailedAuthThrottle(_LiveRates, SimpleRateThrottle):
    """Counts 401 answers per client address (``failed_auth`` rate) in the cache.

    Not a view throttle: DRF checks throttles after authentication, and a request with a bad
    key never gets that far. The authentication class asks :meth:`blocked` first and the
    exception handler calls :meth:`record` for every 401 it answers.
    """

    scope = "failed_auth"

    def get_cache_key(self, request, view=None) -> str:
        return self.cache_format % {"scope": self.scope, "ident": self.get_ident(request)}

    def _load(self, request) -> None:
        self.key = self.get_cache_key(request)
        self.history = self.cache.get(self.key, [])
        self.now = self.timer()
        while self.history and self.history[-1] <= self.now - self.duration:
            self.history.pop()

    def blocked(self, request) -> bool:
        """True when this address used up its failed attempts in the current window."""
        if self.rate is None:
            return False
        self._load(request)
        return len(self.history) >= self.num_requests

    def record(self, request) -> None:
        """Count one failed authentication of this address."""
        if self.rate is None:
            return
        self._load(request)
        self.history.insert(0, self.now)
        self.cache.set(self.key, self.history, self.duration)
