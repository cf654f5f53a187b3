"""Shared fixtures: a migrated database (SQLite, or PostgreSQL when FLAREBOOK_TEST_DATABASE_URL is
set), the app, a small invented school, and a signed-in client per role."""
import os
import re
import time
import uuid

import argon2
import pytest
from fastapi.testclient import TestClient
from sqlalchemy import create_engine, text
from sqlalchemy.engine import make_url
from sqlalchemy.exc import OperationalError

from server.app import create_app
from server.config import Settings
from server.migrate import upgrade
from server.models import Base
from server.people import security
from tests.browser.fixtures import (  # noqa: F401 (the real-browser fixtures, for page tests in every folder)
    axe_path,
    base_url,
    browser_context_args,
    browser_type_launch_args,
    chromium_path,
    live_server,
)
from tests.support import PASSWORD, World, audit_table_writable, build_world

POSTGRES_URL = os.environ.get("FLAREBOOK_TEST_DATABASE_URL")


@pytest.fixture(scope="session", autouse=True)
def cheap_password_hashes():
    """argon2-cffi's cheapest profile for the test accounts: every test builds a school of five people
    and signs some in, and at production cost hashing took most of the suite's time. The test of the
    stored parameters asks for `production_password_hashes`; commands run as subprocesses keep them."""
    production = security._hasher
    security._hasher = argon2.PasswordHasher.from_parameters(argon2.profiles.CHEAPEST)
    yield
    security._hasher = production


@pytest.fixture
def production_password_hashes():
    cheap = security._hasher
    security._hasher = security.PRODUCTION_HASHER
    yield
    security._hasher = cheap


@pytest.fixture(scope="session")
def database_url(tmp_path_factory):
    """A new, migrated database for this test session; PostgreSQL gets a database of its own."""
    if not POSTGRES_URL:
        url = f"sqlite:///{tmp_path_factory.mktemp('db') / 'test.sqlite3'}"
        upgrade(url)
        yield url
        return
    name = f"flarebook_test_{uuid.uuid4().hex[:10]}"
    admin = create_engine(POSTGRES_URL, isolation_level="AUTOCOMMIT")
    with admin.connect() as conn:
        conn.execute(text(f'CREATE DATABASE "{name}"'))
    url = make_url(POSTGRES_URL).set(database=name).render_as_string(hide_password=False)
    upgrade(url)
    yield url
    with admin.connect() as conn:
        conn.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
    admin.dispose()


@pytest.fixture(scope="session")
def settings(database_url) -> Settings:
    return Settings(database_url=database_url)


@pytest.fixture(scope="session")
def app(settings):
    application = create_app(settings)
    yield application
    application.state.engine.dispose()


@pytest.fixture(autouse=True)
def empty_database(request):
    """Every test starts from empty tables (tests that never touch the database skip this)."""
    yield
    if "app" not in request.fixturenames:
        return
    app = request.getfixturevalue("app")
    app.state.stranger_tally.take()  # strangers counted in one test are not written in the next
    engine = app.state.engine
    tables = list(reversed(Base.metadata.sorted_tables))
    # A page test's live server may still be answering the browser's last request; on PostgreSQL the
    # TRUNCATE can then lose a deadlock to it, and trying again once that request is done succeeds.
    for attempt in range(5):
        try:
            with engine.begin() as conn:
                with audit_table_writable(conn):  # the audit table is append-only; tests start over anyway
                    if engine.dialect.name == "postgresql":
                        conn.execute(text("TRUNCATE " + ", ".join(f'"{t.name}"' for t in tables)
                                          + " RESTART IDENTITY CASCADE"))
                    else:
                        for table in tables:
                            conn.execute(table.delete())
            return
        except OperationalError as error:
            if "deadlock" not in str(error) or attempt == 4:
                raise
            time.sleep(0.2)


@pytest.fixture
def db(app):
    """A session for arranging and checking data; tests commit what they arrange."""
    with app.state.sessions() as session:
        yield session


@pytest.fixture
def world(app) -> World:
    """A small invented school: a chief pilot, two instructors, two students, a type, aircraft, a site."""
    with app.state.sessions() as session:
        built = build_world(session)
        session.commit()
    return built


class BrowserLikeClient(TestClient):
    """A client that signed in through the real form and keeps the page's CSRF token."""

    csrf: str = ""

    def form_post(self, url: str, data: dict | None = None, **kwargs):
        return self.post(url, data={**(data or {}), "csrf_token": self.csrf}, **kwargs)

    def htmx_post(self, url: str, data: dict | None = None, **kwargs):
        headers = {"HX-Request": "true", "X-CSRF-Token": self.csrf, **kwargs.pop("headers", {})}
        return self.post(url, data=data or {}, headers=headers, **kwargs)

    def api(self, method: str, url: str, **kwargs):
        headers = {"X-CSRF-Token": self.csrf, **kwargs.pop("headers", {})}
        return self.request(method, url, headers=headers, **kwargs)


def csrf_from(html: str) -> str:
    match = re.search(r'name="csrf_token" value="([^"]+)"', html)
    assert match, "the page carries no CSRF token"
    return match.group(1)


def sign_in(app, email: str, password: str = PASSWORD) -> BrowserLikeClient:
    client = BrowserLikeClient(app, base_url="http://testserver", follow_redirects=False)
    page = client.get("/signin")
    answer = client.post("/signin", data={"email": email, "password": password, "csrf_token": csrf_from(page.text)})
    assert answer.status_code == 303, answer.text
    client.csrf = csrf_from(client.get("/").text)
    return client


@pytest.fixture
def anonymous(app) -> TestClient:
    return TestClient(app, base_url="http://testserver", follow_redirects=False)


@pytest.fixture
def chief_client(app, world) -> BrowserLikeClient:
    return sign_in(app, world.chief.email)


@pytest.fixture
def instructor_client(app, world) -> BrowserLikeClient:
    return sign_in(app, world.instructor.email)


@pytest.fixture
def other_instructor_client(app, world) -> BrowserLikeClient:
    return sign_in(app, world.other_instructor.email)


@pytest.fixture
def student_client(app, world) -> BrowserLikeClient:
    return sign_in(app, world.student.email)


@pytest.fixture
def other_student_client(app, world) -> BrowserLikeClient:
    return sign_in(app, world.other_student.email)
