"""The `flarebook` command as an operator runs it: the installed console script, in a process of its own,
with FLAREBOOK_DATABASE_URL pointing at a database of the test's own."""
import os
import subprocess
import sys
from pathlib import Path

import pytest
from fastapi.testclient import TestClient
from sqlalchemy import create_engine, func, inspect, select, text

from server.app import create_app
from server.config import PROJECT_ROOT, Settings
from server.migrate import upgrade
from server.people.models import Person
from tests.separate_database import separate_database_url

CONSOLE_SCRIPT = Path(sys.executable).with_name("flarebook")
PASSWORD = "cli-test-password"


def flarebook_command() -> list[str]:
    """The installed console script; the module itself where the project was not installed."""
    if CONSOLE_SCRIPT.is_file():
        return [str(CONSOLE_SCRIPT)]
    return [sys.executable, "-m", "server.cli"]


@pytest.fixture
def database_url(tmp_path):
    with separate_database_url(tmp_path) as url:
        yield url


@pytest.fixture
def migrated(database_url) -> str:
    """Tables made in this process, for tests about other commands than `init`."""
    upgrade(database_url)
    return database_url


@pytest.fixture
def run(database_url, tmp_path):
    """Run `flarebook ARGS` against the test's database; return the finished process."""
    env = {**os.environ, "FLAREBOOK_DATABASE_URL": database_url,
           "PYTHONPATH": os.pathsep.join(filter(None, [str(PROJECT_ROOT), os.environ.get("PYTHONPATH")]))}

    def _run(*args: str) -> subprocess.CompletedProcess:
        return subprocess.run([*flarebook_command(), *args], env=env, cwd=tmp_path, capture_output=True,
                              text=True, timeout=180, stdin=subprocess.DEVNULL)
    return _run


def one_line_reason(process: subprocess.CompletedProcess) -> str:
    assert process.returncode != 0
    assert process.stdout == ""
    lines = process.stderr.splitlines()
    assert len(lines) == 1, f"expected one line on stderr, got: {process.stderr!r}"
    return lines[0]


def count_people(url: str) -> int:
    engine = create_engine(url)
    try:
        with engine.connect() as conn:
            return conn.scalar(select(func.count()).select_from(Person))
    finally:
        engine.dispose()


def add_user(run, email="pat@school.example", *roles: str) -> subprocess.CompletedProcess:
    role_args = [arg for role in (roles or ("instructor",)) for arg in ("--role", role)]
    return run("user", "add", "--email", email, "--name", "Pat Pilot", *role_args, "--password", PASSWORD)


def test_init_creates_the_tables_and_running_it_again_is_harmless(run, database_url):
    first = run("init")
    assert first.returncode == 0, first.stderr
    engine = create_engine(database_url)
    try:
        tables = set(inspect(engine).get_table_names())
    finally:
        engine.dispose()
    assert {"people", "sorties", "attempts", "alembic_version"} <= tables
    again = run("init")
    assert again.returncode == 0, again.stderr
    assert count_people(database_url) == 0


def test_user_add_then_the_same_email_again_is_refused_in_one_line(migrated, run, database_url):
    added = add_user(run, "pat@school.example", "instructor", "chief_pilot")
    assert added.returncode == 0, added.stderr
    assert "Pat Pilot" in added.stdout and "pat@school.example" in added.stdout
    # Emails are compared without regard to case, as mail servers treat them.
    duplicate = add_user(run, "PAT@school.example")
    assert "already" in one_line_reason(duplicate)
    assert count_people(database_url) == 1


def test_user_add_with_a_short_password_is_refused(migrated, run, database_url):
    short = run("user", "add", "--email", "kim@school.example", "--name", "Kim", "--role", "student",
                "--password", "short")
    assert "password" in one_line_reason(short)
    assert count_people(database_url) == 0


def test_token_new_prints_the_token_alone_and_the_api_accepts_it(migrated, run, database_url):
    assert add_user(run, "pat@school.example", "instructor").returncode == 0
    made = run("token", "new", "pat@school.example")
    assert made.returncode == 0, made.stderr
    assert made.stdout.count("\n") == 1 and made.stdout.endswith("\n")
    token = made.stdout.strip()
    assert token and " " not in token

    app = create_app(Settings(database_url=database_url))
    try:
        with TestClient(app, base_url="http://testserver") as client:
            me = client.get("/api/v1/me", headers={"Authorization": f"Bearer {token}"})
            assert me.status_code == 200, me.text
            assert me.json()["name"] == "Pat Pilot" and me.json()["roles"] == ["instructor"]
            forged = client.get("/api/v1/me", headers={"Authorization": f"Bearer {token[:-2]}xx"})
            assert forged.status_code == 401
    finally:
        app.state.engine.dispose()


def test_token_new_for_an_unknown_email_exits_non_zero(migrated, run):
    refused = run("token", "new", "nobody@school.example")
    assert "nobody@school.example" in one_line_reason(refused)


def test_demo_loads_once_and_a_second_run_says_it_did_not_load_again(run, database_url):
    first = run("demo")
    assert first.returncode == 0, first.stderr
    assert "Larkspur Rotor School" in first.stdout
    people = count_people(database_url)
    assert people >= 5
    second = run("demo")
    assert second.returncode == 0, second.stderr
    assert "not loaded" in second.stdout
    assert count_people(database_url) == people


def test_currency_verify_catches_a_tampered_kept_row_and_rebuild_mends_it(run, database_url):
    assert run("demo").returncode == 0
    clean = run("currency", "verify")
    assert clean.returncode == 0, clean.stderr
    assert "matches a full evaluation" in clean.stdout
    engine = create_engine(database_url)
    try:
        with engine.begin() as conn:
            pilot_id, rule_id, count = conn.execute(text(
                "SELECT k.pilot_id, k.rule_id, k.window_count FROM currency_kept_standings k "
                "ORDER BY k.window_count DESC, k.pilot_id, k.rule_id LIMIT 1")).one()
            conn.execute(text("UPDATE currency_kept_standings SET window_count = :n WHERE pilot_id = :p AND rule_id = :r"),
                         {"n": count + 3, "p": pilot_id, "r": rule_id})
            name = conn.scalar(text("SELECT name FROM people WHERE id = :p"), {"p": pilot_id})
            rule = conn.scalar(text("SELECT name FROM currency_rules WHERE id = :r"), {"r": rule_id})
    finally:
        engine.dispose()
    tampered = run("currency", "verify")
    assert tampered.returncode == 1 and tampered.stdout == ""
    assert f"pilot {pilot_id} ({name}), rule {rule_id} ({rule})" in tampered.stderr
    assert "window_count" in tampered.stderr
    rebuilt = run("currency", "rebuild")
    assert rebuilt.returncode == 0, rebuilt.stderr
    assert run("currency", "verify").returncode == 0


def test_init_builds_the_kept_state_of_a_database_that_never_had_one(run, database_url):
    """As after the migration that adds the table to a school's existing records."""
    assert run("demo").returncode == 0
    engine = create_engine(database_url)
    try:
        with engine.begin() as conn:
            conn.execute(text("DELETE FROM currency_kept_standings"))
        assert run("currency", "verify").returncode == 1
        assert run("init").returncode == 0
        with engine.connect() as conn:
            assert conn.scalar(text("SELECT count(*) FROM currency_kept_standings")) > 0
    finally:
        engine.dispose()
    assert run("currency", "verify").returncode == 0
