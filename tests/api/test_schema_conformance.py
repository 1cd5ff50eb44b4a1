"""schemathesis against our own OpenAPI schema: no 500s, answers conform to the schema.

Bounded and repeatable: GET operations plus the sweeps POST, at most 20 generated examples
each, derandomized (the same examples every run), the coverage phase off.
"""

import pytest
import schemathesis
from hypothesis import HealthCheck, settings
from schemathesis.checks import not_a_server_error
from schemathesis.config import SchemathesisConfig
from schemathesis.specs.openapi.checks import (
    content_type_conformance,
    response_schema_conformance,
    status_code_conformance,
)

CHECKS = [
    not_a_server_error,
    status_code_conformance,
    content_type_conformance,
    response_schema_conformance,
]

CONFIG = {
    "generation": {"max-examples": 20, "deterministic": True},
    "phases": {"coverage": {"enabled": False}, "stateful": {"enabled": False}},
}


def _our_schema() -> dict:
    """The OpenAPI document /api/v1/schema/ serves, generated in-process (no request)."""
    import json

    from drf_spectacular.generators import SchemaGenerator
    from drf_spectacular.renderers import OpenApiJsonRenderer

    raw = SchemaGenerator().get_schema(request=None, public=True)
    return json.loads(OpenApiJsonRenderer().render(raw))


def _load():
    from labdb.wsgi import application

    loaded = schemathesis.openapi.from_dict(
        _our_schema(), config=SchemathesisConfig.from_dict(CONFIG)
    )
    loaded.app = application  # requests go straight to the WSGI app, no server
    return loaded.include(method="GET").include(path="/api/v1/sweeps/", method="POST")


schema = _load()


@pytest.fixture(autouse=True)
def _keep_the_test_connection():
    # Requests go straight to the WSGI app, whose request signals would close the database
    # connection the test's transaction lives on (Django's test client unhooks them too).
    from django.core.signals import request_finished, request_started
    from django.db import close_old_connections

    request_started.disconnect(close_old_connections)
    request_finished.disconnect(close_old_connections)
    yield
    request_started.connect(close_old_connections)
    request_finished.connect(close_old_connections)


@pytest.fixture
def write_key(member):
    from labdb.api.tokens import mint_token

    return mint_token(member, "write")[1]


@schema.parametrize()
@settings(
    max_examples=20,
    deadline=None,
    derandomize=True,
    database=None,
    suppress_health_check=list(HealthCheck),
)
def test_the_api_answers_every_generated_request_as_its_schema_says(
    case, settings, stored_sweep, lot_summary, write_key
):
    settings.ALLOWED_HOSTS = ["localhost", "testserver"]  # schemathesis sends Host: localhost
    case.call_and_validate(headers={"Authorization": f"Token {write_key}"}, checks=CHECKS)
