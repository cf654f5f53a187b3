"""The audit table refuses UPDATE and DELETE in the database itself (SQLite triggers, a PostgreSQL trigger).

Yardsticks: OWASP ASVS 5.0 V16.4 (logs protected from modification; section number from memory) and
FAA AC 120-78A's idea that an electronic record shows any change after it was made.
"""
import pytest
from sqlalchemy import text
from sqlalchemy.exc import DBAPIError

from server.db import transaction
from server.records import audit


@pytest.fixture
def entry(app):
    with transaction(app.state.sessions) as session:
        row = audit.append(session, actor_id=None, action="create", entity="test", entity_id=1, after={"a": 1})
    return row.seq  # its place in the chain is given when it is written, at the commit


@pytest.mark.parametrize("statement", [
    "UPDATE audit_events SET reason = 'rewritten' WHERE seq = :seq",
    "UPDATE audit_events SET after = NULL",
    "DELETE FROM audit_events WHERE seq = :seq",
    "DELETE FROM audit_events",
])
def test_the_database_refuses_to_change_or_remove_an_audit_entry(app, entry, statement):
    with pytest.raises(DBAPIError, match="append-only"):
        with app.state.engine.begin() as connection:
            connection.execute(text(statement), {"seq": entry})
    with app.state.engine.connect() as connection:
        assert connection.execute(text("SELECT count(*), max(reason) FROM audit_events")).one() == (1, None)


def test_postgresql_refuses_truncate_too(app, entry):
    if app.state.engine.dialect.name != "postgresql":
        pytest.skip("TRUNCATE is PostgreSQL's; SQLite has only DELETE")
    with pytest.raises(DBAPIError, match="append-only"):
        with app.state.engine.begin() as connection:
            connection.execute(text("TRUNCATE audit_events CASCADE"))


def test_appending_still_works_and_the_chain_holds(app, entry):
    with transaction(app.state.sessions) as session:
        audit.append(session, actor_id=None, action="edit", entity="test", entity_id=1, before={"a": 1}, after={"a": 2})
    with app.state.sessions() as session:
        report = audit.verify(session)
    assert report.ok and report.entries == 2
