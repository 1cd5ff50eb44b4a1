"""schema/ is valid OpenAPI 3 covering the contract's paths; docs/ is served without a CDN."""

import re

import pytest
import yaml
from drf_spectacular.validation import validate_schema

pytestmark = pytest.mark.django_db

CONTRACT_PATHS = {
    "/api/v1/parts/",
    "/api/v1/parts/{part_number}/",
    "/api/v1/lots/",
    "/api/v1/lots/{id}/",
    "/api/v1/units/",
    "/api/v1/units/{id}/",
    "/api/v1/fixtures/",
    "/api/v1/calibrations/",
    "/api/v1/sweeps/",
    "/api/v1/sweeps/{id}/",
    "/api/v1/sweeps/{id}/raw",
    "/api/v1/sweeps/{id}/fits/",
    "/api/v1/fits/{id}/",
    "/api/v1/fits/{id}/spice",
    "/api/v1/lots/{id}/spice",
    "/api/v1/lots/{id}/summary",
}


def test_the_schema_is_valid_openapi_covers_the_contract_and_documents_errors(client):
    response = client.get("/api/v1/schema/")
    assert response.status_code == 200
    schema = yaml.safe_load(response.content)
    validate_schema(schema)  # raises on an invalid OpenAPI 3 document
    assert CONTRACT_PATHS <= set(schema["paths"])
    assert schema["components"]["securitySchemes"]["tokenAuth"]["name"] == "Authorization"
    fit = schema["components"]["schemas"]["Fit"]["properties"]
    assert set(fit) == {
        "id",
        "sweep",
        "version",
        "model",
        "params",
        "stderr",
        "correlation",
        "metrics",
        "warnings",
        "fitter_version",
        "created_at",
    }
    # Every operation documents the error shape.
    for path, item in schema["paths"].items():
        for method, op in item.items():
            assert op["responses"]["401"]["content"]["application/json"]["schema"] == {
                "$ref": "#/components/schemas/Errors"
            }, (method, path)


def test_the_docs_page_loads_its_assets_from_this_server(client):
    response = client.get("/api/v1/docs/")
    assert response.status_code == 200
    html = response.content.decode()
    assets = re.findall(r'(?:src|href)="([^"]+)"', html)
    assert assets and all(a.startswith("/") for a in assets), assets
    assert "<script>" not in html.replace(" ", "")  # no inline script: it comes from ?script
    script = client.get("/api/v1/docs/?script")
    assert script.status_code == 200
    assert "/api/v1/schema/" in script.content.decode()
