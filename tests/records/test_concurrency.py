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


def test_fifty_attempts_logged_at_once_through_the_app_number_and_chain_in_order(app, world, settings):
    """Through the app on one event loop, as one server runs: every answer 201, attempt numbers 1 to
    50 without gaps or repeats, and the chain verifies."""
    from server.logbook.models import Attempt
    from server.people import service as people
    from tests.support import make_sortie, post_at_once

    with app.state.sessions() as session:
        sortie = make_sortie(session, world)
        token = people.issue_token(session, person=session.merge(world.instructor), label="tablet")
        session.commit()
    body = {"maneuver": "turn_180", "termination": "to_hover", "descent_kias": 63}
    answers = post_at_once(app, token, [(f"/api/v1/sorties/{sortie.id}/attempts", body)] * 50)
    assert [a.status_code for a in answers] == [201] * 50
    engine = make_engine(settings.database_url)
    with make_session_factory(engine)() as session:
        numbers = session.scalars(select(Attempt.sequence).where(Attempt.sortie_id == sortie.id)).all()
        assert sorted(numbers) == list(range(1, 51))
        assert audit.verify(session).ok
    engine.dispose()
