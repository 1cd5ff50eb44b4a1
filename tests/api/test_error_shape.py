"""Every 4xx answers {"errors": [{"field" or "line"/"column", "message"}]}, never a traceback."""

import pytest
from rest_framework.exceptions import ErrorDetail

from labdb.api.errors import detail_entries, problem_entry
from labdb.measurements.errors import Problem

pytestmark = pytest.mark.django_db


def test_a_path_that_names_no_endpoint_is_a_json_404_with_a_hint(client_for):
    api = client_for("viewer")
    response = api.get("/api/v1/fits/1")
    assert response.status_code == 404
    assert response.json() == {
        "errors": [{"message": "no endpoint at /api/v1/fits/1; did you mean /api/v1/fits/1/ ?"}]
    }
    assert api.get("/api/v1/nothing/here/").status_code == 404


def test_an_unsupported_method_is_405_in_the_error_shape(client_for, stored_sweep):
    response = client_for("curator").put(f"/api/v1/sweeps/{stored_sweep.pk}/", {}, format="json")
    assert response.status_code == 405
    assert list(response.json()) == ["errors"]


def test_an_unsupported_media_type_is_415(client_for, bench):
    response = client_for("member").generic(
        "POST", "/api/v1/lots/", b"part=TST-V1", content_type="text/x-unknown"
    )
    assert response.status_code == 415
    assert response.json()["errors"][0]["message"]


def test_nested_validation_errors_carry_dotted_field_paths():
    detail = {
        "points": {"bias_v": {0: [ErrorDetail("A valid number is required.")]}},
        "non_field_errors": [ErrorDetail("send a file or points")],
        "kind": [ErrorDetail('"xy" is not a valid choice.')],
    }
    assert detail_entries(detail) == [
        {"field": "points.bias_v.0", "message": "A valid number is required."},
        {"message": "send a file or points"},
        {"field": "kind", "message": '"xy" is not a valid choice.'},
    ]


def test_a_located_problem_keeps_only_the_places_that_are_known():
    assert problem_entry(Problem("not a number", file="a.csv", line=4, column="C (pF)")) == {
        "file": "a.csv",
        "line": 4,
        "column": "C (pF)",
        "message": "not a number",
    }
    assert problem_entry(Problem("no part given", field="part")) == {
        "field": "part",
        "message": "no part given",
    }
