"""`flarebook import KIND FILE [--dry-run]` as an operator runs it: the installed console script in a
process of its own, then `flarebook audit verify` over what it imported."""
from datetime import date, timedelta

from sqlalchemy import create_engine, func, select
from sqlalchemy.orm import Session

from server.logbook.models import Attempt, Sortie
from server.people.models import Person
from tests.imports.test_import_api import ATTEMPT_HEADER, attempt_row
from tests.imports.test_reading import csv_bytes
from tests.support import build_world
from tests.test_cli import database_url, migrated, one_line_reason, run  # noqa: F401  (fixtures)


def _school(url: str) -> None:
    engine = create_engine(url)
    with Session(engine) as session:
        build_world(session)
        session.commit()
    engine.dispose()


def _count(url: str, model) -> int:
    engine = create_engine(url)
    with engine.connect() as conn:
        value = conn.execute(select(func.count()).select_from(model)).scalar_one()
    engine.dispose()
    return value


def test_import_people_then_attempts_and_the_chain_verifies(migrated, run, tmp_path):
    _school(migrated)
    people_file = tmp_path / "people.csv"
    people_file.write_bytes(csv_bytes([["Name", "Email", "Roles"], ["Nia Newpilot", "nia@school.example", "student"]],
                                      delimiter=";", bom=True))
    done = run("import", "people", str(people_file))
    assert done.returncode == 0, done.stderr
    assert "created 1 people" in done.stdout
    day = date.today() - timedelta(days=5)
    attempts_file = tmp_path / "attempts.csv"
    attempts_file.write_bytes(csv_bytes([ATTEMPT_HEADER, attempt_row(day, pilot="nia@school.example"),
                                         attempt_row(day, pilot="Nia Newpilot", touchdown="5")]))
    checked = run("import", "attempts", str(attempts_file), "--dry-run")
    assert checked.returncode == 0, checked.stderr
    assert "would create 0 people, 1 sorties, 2 attempts; nothing was created" in checked.stdout
    assert _count(migrated, Sortie) == 0
    imported = run("import", "attempts", str(attempts_file))
    assert imported.returncode == 0, imported.stderr
    assert "created 0 people, 1 sorties, 2 attempts" in imported.stdout
    assert _count(migrated, Attempt) == 2
    verified = run("audit", "verify")
    assert verified.returncode == 0, verified.stderr
    assert "The audit chain holds" in verified.stdout


def test_a_bad_file_exits_non_zero_lists_each_row_and_creates_nothing(migrated, run, tmp_path):
    _school(migrated)
    bad = tmp_path / "bad.csv"
    bad.write_bytes(csv_bytes([ATTEMPT_HEADER, attempt_row(), attempt_row(touchdown="quick"),
                               attempt_row(pilot="ghost@school.example")]))
    people_before = _count(migrated, Person)
    result = run("import", "attempts", str(bad))
    assert result.returncode == 1
    assert "nothing was created" in result.stderr and len(result.stderr.splitlines()) == 1
    assert "row 3, Touchdown speed (kt):" in result.stdout and "row 4, Student:" in result.stdout
    assert _count(migrated, Sortie) == 0 and _count(migrated, Person) == people_before
    missing = run("import", "attempts", str(tmp_path / "nope.csv"))
    assert "cannot read" in one_line_reason(missing)
