"""Fifty appends at once give contiguous sequence numbers and a chain that verifies, on SQLite (writers
begin with BEGIN IMMEDIATE, SQLite docs "Transaction") and on PostgreSQL (a transaction-scoped advisory
lock, PostgreSQL docs "Advisory Locks") when FLAREBOOK_TEST_DATABASE_URL is set."""
import threading

from sqlalchemy import select

from server.db import make_engine, make_session_factory, transaction
from server.records import audit
from server.records.models import AuditEvent


def test_fifty_concurrent_appends_chain_in_order(app, settings):
    start, errors = threading.Barrier(50), []

    def append(i: int):
        try:
            start.wait()
            with transaction(app.state.sessions) as session:
                audit.append(session, actor_id=None, action="test", entity="thread", entity_id=i)
        except Exception as error:  # collected, so the test shows it
            errors.append(error)

    threads = [threading.Thread(target=append, args=(i,)) for i in range(50)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert errors == []
    engine = make_engine(settings.database_url)
    with make_session_factory(engine)() as session:
        rows = session.scalars(select(AuditEvent).order_by(AuditEvent.seq)).all()
        assert [r.seq for r in rows] == list(range(1, 51))
        assert sorted(int(r.entity_id) for r in rows) == list(range(50))
        assert audit.verify(session).ok
    engine.dispose()
