"""The demo school, as a newcomer meets it: the README's sign-ins work, the sign-in page lists them, and
every page in the menu shows something for the chief pilot, an instructor and a student."""
import re
from html.parser import HTMLParser

import pytest
from fastapi.testclient import TestClient
from sqlalchemy import func, select

from server.app import create_app
from server.config import PROJECT_ROOT, Settings
from server.demo import load_demo
from server.logbook.models import Sortie
from server.migrate import upgrade
from tests.conftest import sign_in
from tests.separate_database import separate_database_url

README = (PROJECT_ROOT / "README.md").read_text()
DEMO_EMAIL = re.compile(r"`([a-z]+@larkspur-rotor\.example)`")
EMPTY_STATE = re.compile(r"^No .* yet\b")  # how the pages say that a list is empty


def readme_demo_password() -> str:
    match = re.search(r"Every demo account has the password\s+`([^`]+)`", README)
    assert match, "the README no longer states the demo password"
    return match.group(1)


def readme_demo_emails() -> list[str]:
    section = README.split("### Demo sign-ins", 1)[1].split("\n## ", 1)[0]
    return DEMO_EMAIL.findall(section)


class Page(HTMLParser):
    """What a person sees of a page: the menu's links and what the main part holds."""

    ITEMS = {"tr", "li", "article", "svg", "dd", "option"}
    TEXTS = ("h1", "p", "code")

    def __init__(self, html: str):
        super().__init__()
        self.nav_links: list[str] = []
        self.items = 0
        self.texts: dict[str, list[str]] = {tag: [] for tag in self.TEXTS}
        self.demo_table: list[str] = []
        self._in_nav = self._in_main = self._in_demo = False
        self._open: dict[str, list[str]] = {}
        self.feed(html)

    @property
    def headings(self) -> list[str]:
        return self.texts["h1"]

    @property
    def paragraphs(self) -> list[str]:
        return self.texts["p"]

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "nav" and attrs.get("aria-label") == "Main":
            self._in_nav = True
        elif tag == "a" and self._in_nav:
            self.nav_links.append(attrs["href"])
        elif tag == "main":
            self._in_main = True
        elif tag == "section" and "demo-box" in (attrs.get("class") or ""):
            self._in_demo = True
        if self._in_main and tag in self.ITEMS and not (tag == "option" and not attrs.get("value")):
            self.items += 1
        if self._in_main and tag in self.TEXTS:
            self._open[tag] = []

    def handle_endtag(self, tag):
        if tag == "nav":
            self._in_nav = False
        elif tag == "main":
            self._in_main = False
        elif tag == "section":
            self._in_demo = False
        if tag in self._open:
            text = " ".join("".join(self._open.pop(tag)).split())
            self.texts[tag].append(text)
            if tag == "code" and self._in_demo:
                self.demo_table.append(text)

    def handle_data(self, data):
        for buffer in self._open.values():
            buffer.append(data)


@pytest.fixture(scope="module")
def demo_app(tmp_path_factory):
    """An app on a database of its own holding the demo school, loaded once for this module."""
    with separate_database_url(tmp_path_factory.mktemp("demo")) as url:
        upgrade(url)
        application = create_app(Settings(database_url=url))
        with application.state.sessions() as session:
            load_demo(session)
            session.commit()
        yield application
        application.state.engine.dispose()


def test_the_readme_lists_the_demo_sign_ins():
    emails = readme_demo_emails()
    assert {"chief@larkspur-rotor.example", "ines@larkspur-rotor.example", "ada@larkspur-rotor.example"} <= set(emails)


@pytest.mark.parametrize("email", readme_demo_emails())
def test_every_readme_demo_sign_in_works(demo_app, email):
    client = sign_in(demo_app, email, readme_demo_password())
    home = Page(client.get("/").text)
    assert home.headings and home.headings[0].startswith("Hello,")


def test_the_demo_sign_in_page_lists_the_readme_sign_ins_and_password(demo_app):
    page = Page(TestClient(demo_app).get("/signin").text)
    assert set(readme_demo_emails()) <= set(page.demo_table), page.demo_table
    assert readme_demo_password() in page.demo_table


def test_a_school_that_is_not_the_demo_lists_no_sign_ins(anonymous, world):
    answer = anonymous.get("/signin")
    page = Page(answer.text)
    assert page.demo_table == []
    assert readme_demo_password() not in answer.text
    assert "larkspur-rotor.example" not in answer.text


@pytest.mark.parametrize("email", ["chief@larkspur-rotor.example", "ines@larkspur-rotor.example",
                                   "ada@larkspur-rotor.example"])
def test_every_page_in_the_menu_shows_something_to_the_demo_person(demo_app, email):
    client = sign_in(demo_app, email, readme_demo_password())
    client.follow_redirects = True
    menu = Page(client.get("/").text).nav_links
    assert len(menu) >= 3, menu
    for link in menu:
        answer = client.get(link)
        assert answer.status_code == 200, f"{link}: {answer.status_code}"
        assert answer.headers["content-type"].startswith("text/html"), f"{link} is not a page"
        page = Page(answer.text)
        assert page.headings, f"{link} has no heading"
        assert page.items > 0, f"{link} shows nothing for {email}"
        empty = [p for p in page.paragraphs if EMPTY_STATE.match(p)]
        assert empty == [], f"{link} for {email}: {empty}"


@pytest.mark.parametrize("email", ["chief@larkspur-rotor.example", "ines@larkspur-rotor.example",
                                   "ada@larkspur-rotor.example"])
def test_the_demo_persons_latest_sortie_sheet_shows_scored_attempts(demo_app, email):
    client = sign_in(demo_app, email, readme_demo_password())
    listing = client.get("/sorties").text
    first = re.search(r'href="[^"]*/sorties/(\d+)"', listing)
    assert first, "the sortie list links to no sortie"
    sheet = client.get(f"/sorties/{first.group(1)}")
    assert sheet.status_code == 200
    assert len(re.findall(r'<article class="attempt', sheet.text)) >= 3
    assert re.search(r'data-score="\d', sheet.text)


def test_the_demo_has_drafts_flags_and_months_of_signed_sorties(demo_app):
    with demo_app.state.sessions() as session:
        sorties = session.scalars(select(Sortie)).all()
        months = {(s.flown_at.year, s.flown_at.month) for s in sorties}
        flagged = sum(1 for s in sorties for a in s.attempts if a.flags)
        drafts = session.scalar(select(func.count()).select_from(Sortie).where(Sortie.state == "draft"))
    assert len(months) >= 4 and flagged > 0 and drafts > 0
