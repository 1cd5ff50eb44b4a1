"""Every page but the login page needs a logged-in user with a role."""

import pytest

pytestmark = pytest.mark.django_db

PAGES = ["/", "/parts/", "/fixtures/", "/upload/"]


@pytest.mark.parametrize("url", PAGES)
def test_an_anonymous_visitor_is_sent_to_login(client, url):
    response = client.get(url)
    assert response.status_code == 302
    assert response["Location"].startswith("/accounts/login/")


def test_the_login_page_is_open(client):
    response = client.get("/accounts/login/")
    assert response.status_code == 200
    assert b'name="username"' in response.content


@pytest.mark.parametrize("url", ["/", "/parts/", "/fixtures/"])
def test_a_user_without_a_role_is_refused(outsider_client, url):
    assert outsider_client.get(url).status_code == 403


def test_a_viewer_cannot_open_the_upload_page(viewer_client):
    assert viewer_client.get("/upload/").status_code == 403


def test_logging_in_leads_to_the_dashboard(client, viewer):
    response = client.post("/accounts/login/", {"username": "vera", "password": "pw-vera"})
    assert response.status_code == 302
    assert client.get(response["Location"]).status_code == 200
