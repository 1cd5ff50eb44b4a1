"""Time filters accept any valid ISO 8601 offset and compare in UTC (PostgreSQL allows ±15:59)."""

from datetime import UTC, datetime

import pytest

pytestmark = pytest.mark.django_db


def test_an_offset_beyond_postgresqls_range_is_compared_in_utc(bench, member_client):
    # 2025-12-31T23:00-17:55 is 2026-01-01T16:55Z, after the bench calibration at 00:00Z.
    url = "/api/v1/calibrations/?measured_after=2025-12-31T23:00:00-17:55"
    response = member_client.get(url)
    assert response.status_code == 200
    assert response.json()["count"] == 0
    response = member_client.get("/api/v1/calibrations/?measured_after=2025-12-31T05:00:00-17:55")
    assert response.status_code == 200
    assert response.json()["count"] == 1
    assert bench.cal.measured_at == datetime(2026, 1, 1, tzinfo=UTC)


def test_a_time_that_leaves_the_calendar_in_utc_is_a_400(bench, member_client):
    response = member_client.get("/api/v1/calibrations/?measured_after=0001-01-01T00:00:00%2B05:00")
    assert response.status_code == 400
    assert response.json()["errors"][0]["field"] == "measured_at"
