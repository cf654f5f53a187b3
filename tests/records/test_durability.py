"""The SQLite settings that keep an answered write on disk (SQLite docs "PRAGMA"): WAL journal,
synchronous=FULL, foreign keys on, a busy timeout, and writers that begin with BEGIN IMMEDIATE."""
import threading

import pytest
from sqlalchemy import text


def test_every_connection_has_the_durability_pragmas(app):
    engine = app.state.engine
    if engine.dialect.name != "sqlite":
        pytest.skip("SQLite pragmas")
    with engine.connect() as conn:
        values = [conn.execute(text(f"PRAGMA {name}")).scalar() for name in
                  ("journal_mode", "synchronous", "foreign_keys", "busy_timeout")]
    assert values == ["wal", 2, 1, 10000]  # synchronous 2 is FULL (SQLite docs)


def test_a_writing_request_holds_the_write_lock_from_its_start(app, world):
    """A second writer waits (busy_timeout) rather than failing, so neither gets 'database is locked'."""
    if app.state.engine.dialect.name != "sqlite":
        pytest.skip("SQLite locking")
    from server.db import transaction

    with transaction(app.state.sessions) as first:
        assert first.connection().exec_driver_sql("SELECT 1").scalar() == 1
        other = app.state.engine.raw_connection()
        try:
            cursor = other.cursor()
            cursor.execute("PRAGMA busy_timeout=50")
            with pytest.raises(Exception, match="locked"):
                cursor.execute("BEGIN IMMEDIATE")
        finally:
            other.close()
    finished = threading.Event()

    def writer():
        with transaction(app.state.sessions) as session:
            session.connection().exec_driver_sql("SELECT 1")
        finished.set()

    thread = threading.Thread(target=writer)
    thread.start()
    thread.join(10)
    assert finished.is_set()
