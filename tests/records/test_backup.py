"""Backups of a live SQLite database with the online backup API (SQLite docs "Using the SQLite Online
Backup API"): a copy taken while the school is writing restores whole, passes PRAGMA integrity_check
and its audit chain verifies; restore refuses to overwrite records unless told to."""
import shutil
import sqlite3
import threading

from server.cli import main
from server.db import make_engine, make_session_factory
from server.records import audit
from tests.records.conftest import drop_audit_guards
from tests.support import make_sortie


class BusySchool(threading.Thread):
    """Writes signed sorties, each in its own transaction, until told to stop."""

    def __init__(self, school):
        super().__init__(daemon=True)
        self.school, self.stop, self.written, self.error = school, threading.Event(), 0, None

    def run(self):
        try:
            while not self.stop.is_set():
                with self.school.sessions() as session:
                    make_sortie(session, self.school.world, attempts=2, sign=True)
                self.written += 1
        except Exception as error:  # shown by the test
            self.error = error


def chain_of(url: str) -> audit.ChainReport:
    engine = make_engine(url)
    with make_session_factory(engine)() as session:
        report = audit.verify(session)
    engine.dispose()
    return report


def test_a_backup_taken_while_writing_restores_whole(file_school, tmp_path, use_database, capsys):
    writer = BusySchool(file_school)
    writer.start()
    while writer.written < 3 and writer.error is None:
        threading.Event().wait(0.02)
    use_database(file_school.url)
    backup_file = tmp_path / "backup.sqlite3"
    assert main(["backup", str(backup_file)]) == 0
    assert "integrity check ok; audit chain holds" in capsys.readouterr().out
    during = writer.written
    while writer.written < during + 3 and writer.error is None:
        threading.Event().wait(0.02)
    writer.stop.set()
    writer.join()
    assert writer.error is None

    restored = tmp_path / "restored" / "school.sqlite3"
    use_database(f"sqlite:///{restored}")
    assert main(["restore", str(backup_file)]) == 0
    connection = sqlite3.connect(restored)
    assert connection.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
    sorties, signed = connection.execute(
        "SELECT count(*), count(*) FILTER (WHERE state = 'signed') FROM sorties").fetchone()
    attempts = connection.execute("SELECT count(*) FROM attempts").fetchone()[0]
    created = connection.execute(
        "SELECT count(*) FROM audit_events WHERE action = 'create' AND entity = 'sortie'").fetchone()[0]
    connection.close()
    # Whole: each sortie in the copy is there with both attempts and its signature, and its audit entries.
    assert sorties >= 3 and sorties == signed == created and attempts == 2 * sorties
    copy, live = chain_of(f"sqlite:///{restored}"), chain_of(file_school.url)
    assert copy.ok and live.ok and copy.head.seq < live.head.seq
    # The copy's chain is the live chain up to the moment of the backup.
    engine = make_engine(file_school.url)
    with make_session_factory(engine)() as session:
        assert session.scalar(audit.select(audit.AuditEvent.hash).where(audit.AuditEvent.seq == copy.head.seq)) == copy.head.hash
    engine.dispose()


def test_restore_keeps_records_unless_forced_and_keeps_a_copy(file_school, tmp_path, use_database, capsys):
    file_school.signed_sortie()
    use_database(file_school.url)
    backup_file = tmp_path / "before.sqlite3"
    assert main(["backup", str(backup_file)]) == 0
    assert main(["backup", str(backup_file)]) == 1
    assert "exists already" in capsys.readouterr().err
    file_school.signed_sortie()  # a change after the backup

    assert main(["restore", str(backup_file)]) == 1
    assert "already holds records; add --force" in capsys.readouterr().err
    assert main(["restore", "--force", str(backup_file)]) == 0
    out = capsys.readouterr().out
    assert "The database it replaced was kept at" in out
    kept = next(tmp_path.glob("school.sqlite3.before-restore-*"))
    counts = [sqlite3.connect(p).execute("SELECT count(*) FROM sorties").fetchone()[0] for p in (file_school.path, kept)]
    assert counts == [1, 2]
    assert main(["audit", "verify"]) == 0


def test_a_damaged_backup_is_refused_with_a_reason(file_school, tmp_path, use_database, capsys):
    file_school.signed_sortie()
    use_database(file_school.url)
    good = tmp_path / "good.sqlite3"
    assert main(["backup", str(good)]) == 0
    tampered = tmp_path / "tampered.sqlite3"
    shutil.copy(good, tampered)
    with sqlite3.connect(tampered) as connection:
        drop_audit_guards(connection)
        connection.execute("UPDATE audit_events SET reason = 'edited' WHERE seq = 3")
    target = tmp_path / "new" / "school.sqlite3"
    use_database(f"sqlite:///{target}")
    capsys.readouterr()
    assert main(["restore", str(tampered)]) == 1
    assert "audit entry seq 3" in capsys.readouterr().err
    not_a_database = tmp_path / "notes.txt"
    not_a_database.write_text("hello" * 1000)
    assert main(["restore", str(not_a_database)]) == 1
    assert "not a SQLite database" in capsys.readouterr().err


def test_postgresql_backups_point_to_pg_dump(use_database, capsys):
    use_database("postgresql+psycopg://flarebook@127.0.0.1:5432/school")
    assert main(["backup", "x.dump"]) == 1
    assert "pg_dump --format=custom" in capsys.readouterr().err


def test_the_export_holds_every_record_but_no_secrets(file_school, use_database, capsys):
    import json

    file_school.signed_sortie(attempts=3)
    use_database(file_school.url)
    assert main(["export"]) == 0
    data = json.loads(capsys.readouterr().out)
    tables = data["tables"]
    assert len(tables["sorties"]) == 1 and len(tables["attempts"]) == 3 and len(tables["signatures"]) == 1
    assert data["audit_head"]["seq"] == len(tables["audit_events"])
    assert "password_hash" not in tables["people"][0] and "api_tokens" not in tables
    text = json.dumps(data)
    assert "argon2" not in text and file_school.token not in text
