"""Token authentication: ``Authorization: Token <key>``; failed attempts are counted per address."""

from __future__ import annotations

from rest_framework import exceptions
from rest_framework.authentication import BaseAuthentication, get_authorization_header

from labdb.api.throttling import FailedAuthThrottle
from labdb.api.tokens import token_for_key

KEYWORD = "Token"


class ApiTokenAuthentication(BaseAuthentication):
    """Personal API tokens. Listed first so an anonymous request is answered 401, not 403."""

    keyword = KEYWORD

    def authenticate(self, request):
        # An address that collected too many 401 answers is refused before anything else.
        guard = FailedAuthThrottle()
        if guard.blocked(request):
            raise exceptions.Throttled(
                guard.wait(), detail="too many failed authentications from this address"
            )
        header = get_authorization_header(request).split()
        if not header or header[0].lower() != self.keyword.lower().encode():
            return None
        if len(header) != 2:
            raise exceptions.AuthenticationFailed(
                "malformed Authorization header: send 'Authorization: Token <key>'"
            )
        try:
            key = header[1].decode("ascii")
        except UnicodeDecodeError:
            raise exceptions.AuthenticationFailed("the token key holds non-ASCII bytes") from None
        token = token_for_key(key)
        if token is None:
            raise exceptions.AuthenticationFailed("unknown or revoked token")
        return token.user, token

    def authenticate_header(self, request) -> str:
        return self.keyword
