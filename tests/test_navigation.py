"""The navigation on every page: each role's links, the current page marked, a favicon, HEAD answered.

Anchor: WAI-ARIA 1.2 `aria-current="page"` (the link to the page one is on); RFC 9110 section 9.3.2
(HEAD answers as GET would, without the content, Content-Length included).
"""
import pytest

from server.navigation import main_nav
from tests.support import parsed


def _nav(client, path="/"):
    nav = parsed(client.get(path)).find("nav", attrs={"aria-label": "Main"})
    links = [a.get_text(strip=True) for a in nav.find_all("a")]
    current = [a.get_text(strip=True) for a in nav.find_all("a", attrs={"aria-current": "page"})]
    return links, current


def test_each_role_sees_its_own_links(chief_client, instructor_client, student_client):
    assert _nav(student_client)[0] == ["Sorties", "Progress", "Programs"]
    assert _nav(instructor_client)[0] == ["Sorties", "Start a sortie", "Progress", "Programs"]
    assert _nav(chief_client)[0] == ["Sorties", "Start a sortie", "Progress", "Programs", "Readiness",
                                     "Safety digest", "Standardisation", "Setup"]


@pytest.mark.parametrize(("path", "marked"), [
    ("/sorties", "Sorties"), ("/sorties/new", "Start a sortie"), ("/progress", "Progress"),
    ("/setup/people", "Setup"), ("/setup/types", "Setup"), ("/currency", "Readiness"), ("/safety", "Safety digest"),
    ("/programs", "Programs"),
])
def test_the_current_page_is_marked(chief_client, path, marked):
    assert _nav(chief_client, path)[1] == [marked]


def test_the_longest_matching_address_wins():
    class Chief:
        def has_role(self, *roles):
            return True

    marked = [item["label"] for item in main_nav(Chief(), "/sorties/new") if item["current"]]
    assert marked == ["Start a sortie"]
    assert not any(item["current"] for item in main_nav(Chief(), "/"))


def test_the_account_link_names_the_person(chief_client, world):
    who = parsed(chief_client.get("/")).find("a", class_="who")
    assert who.get_text() == world.chief.name and who["href"] == "/account"


def test_a_favicon_is_served(anonymous):
    page = parsed(anonymous.get("/signin"))
    assert page.find("link", rel="icon")["href"].endswith("/static/favicon.svg")
    icon = anonymous.get("/favicon.ico")
    assert icon.status_code == 200 and icon.headers["content-type"] == "image/svg+xml"
    assert icon.content.startswith(b"<svg")


def test_head_answers_like_get_without_a_body(chief_client, anonymous):
    for client, path in ((anonymous, "/signin"), (chief_client, "/sorties"), (chief_client, "/api/v1/me"),
                         (anonymous, "/static/app.css")):
        got = client.get(path)
        head = client.head(path)
        assert head.status_code == got.status_code == 200, path
        assert head.content == b""
        assert head.headers["content-type"] == got.headers["content-type"]
    assert anonymous.head("/sorties").status_code == 303  # the same sign-in redirect as GET
