"""`flarebook audit verify`, `backup` and `restore` re-check every signed version of every record.

Yardsticks: FAA AC 120-78A (an electronic signature is bound to the record it signs: a change after
signing must show); OWASP ASVS 5.0 V16 (logs and records protected against tampering, from memory);
SHA-256 as FIPS 180-4 defines it, computed by Python's hashlib. Tampering is done the way an
attacker with the file would: sqlite3 on the file itself, triggers dropped first.
"""
import shutil
import sqlite3

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from server.cli import main
from server.db import make_engine, make_session_factory
from server.logbook import service as logbook
from server.logbook.models import Attempt, Sortie
from server.people.models import Person
from server.records import audit, proof
from server.signed_records import RECORD_CHECKS
from tests.records.conftest import FileSchool, drop_audit_guards

SORTIE_FIELDS = [f for f in logbook.SORTIE_RECORD_FIELDS]
ATTEMPT_FIELDS = [f for f in logbook.ATTEMPT_RECORD_FIELDS]


@pytest.fixture(scope="module")
def signed_file(migrated_file, tmp_path_factory):
    """Version 1 signed, amended into version 2, signed and acknowledged: three signatures."""
    path = tmp_path_factory.mktemp("signed") / "signed.sqlite3"
    shutil.copy(migrated_file, path)
    school = FileSchool(path)
    first = school.signed_sortie(attempts=3)
    with school.sessions() as session:
        instructor = session.get(Person, school.world.instructor.id)
        second = logbook.amend_sortie(session, actor=instructor, sortie=session.get(Sortie, first.id),
                                      reason="touchdown speed corrected from the flight data log")
        logbook.record_instructor_signature(session, actor=instructor, sortie=second)
        logbook.acknowledge_sortie(session, actor=session.get(Person, school.world.student.id), sortie=second)
        session.commit()
        ids = {"v1": first.id, "v2": second.id,
               "attempts": [a.id for a in session.get(Sortie, first.id).attempts]}
    school.engine.dispose()
    return path, ids


def problems_of(path) -> list[proof.SignedProblem]:
    engine = make_engine(f"sqlite:///{path}")
    try:
        with make_session_factory(engine)() as session:
            assert audit.verify(session).ok, "the tampering here leaves the chain itself whole"
            return proof.check_signed(session, RECORD_CHECKS)
    finally:
        engine.dispose()


def _changed(table, column: str, value):
    kind = type(table.columns[column].type).__name__
    if value is None:
        return "x" if kind in ("String", "Text") else 7
    if column == "flags":
        return '[{"code": "tampered", "message": "added later"}]'
    if isinstance(value, bool) or column == "takeover":
        return 1 - int(value)
    if isinstance(value, int | float):
        return value + 1
    if column == "flown_at":
        return value.replace("2026", "2025", 1)
    return value + "x"


def tamper(path, table: str, row_id: int, column: str, *, rehash: bool = False) -> None:
    model = Sortie if table == "sorties" else Attempt
    connection = sqlite3.connect(path)
    with connection:
        drop_audit_guards(connection)
        (value,) = connection.execute(f"SELECT {column} FROM {table} WHERE id = ?", (row_id,)).fetchone()
        connection.execute(f"UPDATE {table} SET {column} = ? WHERE id = ?",
                           (_changed(model.__table__, column, value), row_id))
    connection.close()
    if rehash:  # the attacker also rewrites the signatures' stored hashes to the new content
        engine = make_engine(f"sqlite:///{path}")
        with make_session_factory(engine)() as session:
            sortie_id = row_id if table == "sorties" else session.get(Attempt, row_id).sortie_id
            digest = logbook.content_hash(session.get(Sortie, sortie_id))
        engine.dispose()
        connection = sqlite3.connect(path)
        with connection:
            connection.execute("UPDATE signatures SET content_sha256 = ? WHERE sortie_id = ?", (digest, sortie_id))
        connection.close()


def test_untouched_records_hold(signed_file, tmp_path, use_database, capsys):
    path, _ = signed_file
    assert problems_of(path) == []
    use_database(f"sqlite:///{path}")
    assert main(["audit", "verify"]) == 0
    assert "every signed record matches its signatures and the chain" in capsys.readouterr().out


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(table=st.sampled_from(["sorties", "attempts"]), version=st.sampled_from(["v1", "v2"]),
       which=st.integers(0, 2), data=st.data(), rehash=st.booleans())
def test_any_signed_field_changed_is_named(signed_file, tmp_path_factory, table, version, which, data, rehash):
    path, ids = signed_file
    copy = tmp_path_factory.mktemp("t") / "tampered.sqlite3"
    shutil.copy(path, copy)
    column = data.draw(st.sampled_from(SORTIE_FIELDS if table == "sorties" else ATTEMPT_FIELDS))
    if table == "sorties":
        row_id = ids[version]
    else:
        connection = sqlite3.connect(copy)
        row_id = connection.execute("SELECT id FROM attempts WHERE sortie_id = ? ORDER BY sequence LIMIT 1 OFFSET ?",
                                    (ids[version], which)).fetchone()[0]
        connection.close()
    tamper(copy, table, row_id, column, rehash=rehash)
    found = problems_of(copy)
    sortie_id = ids[version]
    named = [str(p) for p in found if p.record == f"sortie {sortie_id}" and column in p.what]
    assert named, f"{table}.{column} changed (rehash={rehash}); audit verify said: {[str(p) for p in found]}"
    if rehash:
        assert any("stored hash differs from the hash the chain recorded" in str(p) for p in found)


@pytest.mark.parametrize("statement, expected", [
    ("UPDATE signatures SET signer_id = (SELECT id FROM people WHERE email = 'chief@school.example') "
     "WHERE meaning = 'instructor_certifies'", "names signer"),
    ("UPDATE sorties SET state = 'draft'", "its state is 'draft'"),
    ("DELETE FROM attempts WHERE sequence = 3", "is missing now"),
    ("UPDATE signatures SET content_sha256 = '" + "0" * 64 + "'", "stored hash differs"),
])
def test_signatures_themselves_are_checked(signed_file, tmp_path, use_database, capsys, statement, expected):
    path, ids = signed_file
    copy = tmp_path / "copy.sqlite3"
    shutil.copy(path, copy)
    connection = sqlite3.connect(copy)
    with connection:
        drop_audit_guards(connection)
        connection.execute(statement)
    connection.close()
    use_database(f"sqlite:///{copy}")
    assert main(["audit", "verify"]) == 1
    err = capsys.readouterr().err
    assert expected in err and f"sortie {ids['v1']} version 1" in err


def test_the_command_names_record_version_and_field(signed_file, tmp_path, use_database, capsys):
    path, ids = signed_file
    copy = tmp_path / "copy.sqlite3"
    shutil.copy(path, copy)
    tamper(copy, "attempts", ids["attempts"][1], "touchdown_speed_kt", rehash=True)
    use_database(f"sqlite:///{copy}")
    assert main(["audit", "verify"]) == 1
    err = capsys.readouterr().err
    assert f"sortie {ids['v1']} version 1" in err
    assert "attempt 2 (id" in err and "touchdown_speed_kt is 4.0 now, 3.0 when signed" in err


def test_backup_and_restore_run_the_same_check(signed_file, tmp_path, use_database, capsys):
    path, ids = signed_file
    copy = tmp_path / "copy.sqlite3"
    shutil.copy(path, copy)
    tamper(copy, "sorties", ids["v2"], "remarks", rehash=True)
    use_database(f"sqlite:///{copy}")
    assert main(["backup", str(tmp_path / "backup.sqlite3")]) == 1
    assert "a signed record does not hold" in capsys.readouterr().err
    assert not (tmp_path / "backup.sqlite3").exists()
    use_database(f"sqlite:///{tmp_path / 'new' / 'school.sqlite3'}")
    assert main(["restore", str(copy)]) == 1
    err = capsys.readouterr().err
    assert f"sortie {ids['v2']} version 2" in err and "remarks" in err
    assert len(err.strip().splitlines()) == 1


def _empty_the_chain(path) -> None:
    connection = sqlite3.connect(path)
    with connection:
        drop_audit_guards(connection)
        connection.execute("DELETE FROM audit_events")
    connection.close()


def test_records_without_their_chain_are_refused(signed_file, tmp_path, use_database, capsys):
    path, _ = signed_file
    emptied = tmp_path / "emptied.sqlite3"
    shutil.copy(path, emptied)
    _empty_the_chain(emptied)
    use_database(f"sqlite:///{tmp_path / 'new' / 'school.sqlite3'}")
    assert main(["restore", str(emptied)]) == 1
    err = capsys.readouterr().err
    assert "no audit chain for them" in err and "attempts" in err


def test_holding_records_looks_at_every_table(signed_file, tmp_path, use_database, capsys):
    """A database whose chain was emptied still holds sorties: it is not replaced without --force."""
    path, _ = signed_file
    backup_file = tmp_path / "good.sqlite3"
    shutil.copy(path, backup_file)
    live = tmp_path / "live.sqlite3"
    shutil.copy(path, live)
    _empty_the_chain(live)
    use_database(f"sqlite:///{live}")
    assert main(["restore", str(backup_file)]) == 1
    assert "already holds records; add --force" in capsys.readouterr().err
    assert main(["restore", "--force", str(backup_file)]) == 0
    assert list(tmp_path.glob("live.sqlite3.before-restore-*"))


def test_a_look_alike_audit_table_is_refused_in_one_line(tmp_path, use_database, capsys):
    fake = tmp_path / "fake.sqlite3"
    connection = sqlite3.connect(fake)
    connection.execute("CREATE TABLE audit_events (id INTEGER PRIMARY KEY, note TEXT)")
    connection.execute("INSERT INTO audit_events (note) VALUES ('hello')")
    connection.commit()
    connection.close()
    use_database(f"sqlite:///{tmp_path / 'new' / 'school.sqlite3'}")
    assert main(["restore", str(fake)]) == 1
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1
    assert "audit_events table is not Flarebook's" in err and "seq" in err


def test_the_check_runs_on_the_schools_own_database(app, db, world):
    """The same check on the suite's database (PostgreSQL when FLAREBOOK_TEST_DATABASE_URL is set)."""
    from sqlalchemy import update

    from tests.support import make_sortie

    sortie = make_sortie(db, world, attempts=2, sign=True)
    assert proof.check_signed(db, RECORD_CHECKS) == []
    db.execute(update(Attempt).where(Attempt.sortie_id == sortie.id, Attempt.sequence == 1)
               .values(flare_height_ft=120))
    db.commit()
    db.expire_all()
    found = [str(p) for p in proof.check_signed(db, RECORD_CHECKS)]
    assert any(f"sortie {sortie.id} version 1" in p and "flare_height_ft is 120.0 now, 90.0 when signed" in p
               for p in found), found


def test_a_stage_check_changed_after_signing_is_named(app, db, world, chief_client):
    """Stage checks are signed with the checker's password: the chain's entry keeps what was signed."""
    from sqlalchemy import update

    from server.training.models import StageCheck
    from tests.support import PASSWORD

    program = chief_client.api("POST", "/api/v1/programs", json={"name": "Checked syllabus", "stages": [
        {"name": "Stage one", "lessons": [{"name": "Straight-ins", "requirements": [
            {"maneuver": "straight_in", "termination": "touchdown", "attempts_needed": 1}]}]}]}).json()
    enrolment = chief_client.api("POST", f"/api/v1/programs/{program['id']}/enrolments", json={
        "student_id": world.student.id, "instructor_id": world.instructor.id, "started_on": "2026-11-01"}).json()
    signed = chief_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/stage-checks", json={
        "stage_id": program["stages"][0]["id"], "passed": False, "remarks": "flare too high", "password": PASSWORD})
    assert signed.status_code == 201, signed.text
    assert proof.check_signed(db, RECORD_CHECKS) == []
    db.execute(update(StageCheck).values(passed=True, remarks="fine"))
    db.commit()
    db.expire_all()
    found = [str(p) for p in proof.check_signed(db, RECORD_CHECKS)]
    assert any("passed is True now, False when signed" in p for p in found), found
    assert any("remarks is 'fine' now, 'flare too high' when signed" in p for p in found), found
