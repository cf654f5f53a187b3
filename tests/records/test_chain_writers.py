"""Many writers at once leave one audit chain: no gap, no fork, every entry once.

Writers that begin as writers (BEGIN IMMEDIATE on SQLite) and writers that take the turn only when
their entries are written (the late turn of logging an attempt) append side by side; on PostgreSQL
(FLAREBOOK_TEST_DATABASE_URL) also from separate processes, each with its own engine, as several app
servers behind one database do. What "one chain" means is the hash chain's own rule (each entry holds
the hash of the one before, sequence numbers 1, 2, 3 ... with none missing, as in RFC 6962's append-only
log); `audit.verify` checks it and the counts check that nothing was lost or written twice.
"""
import multiprocessing
import threading

from sqlalchemy import func, select

from server.db import make_engine, make_session_factory, mark_late_turn, transaction
from server.logbook.models import Attempt, Signature
from server.logbook.service import content_hash
from server.people import service as people
from server.records import audit
from server.records.models import AuditEvent
from tests.support import PASSWORD, make_sortie, post_at_once

PER_WRITER = 10


def assert_one_chain(url: str, expected_entries: int) -> None:
    engine = make_engine(url)
    with make_session_factory(engine)() as session:
        report = audit.verify(session)
        count = session.scalar(select(func.count()).select_from(AuditEvent))
    engine.dispose()
    assert report.ok, report.problem
    assert count == expected_entries
    assert report.head.seq == expected_entries  # 1 .. n with no gap: no entry lost, none forked


def append_from_its_own_engine(url: str, writer: int, start) -> None:
    """One writer with an engine of its own (a process of its own in the test below)."""
    engine = make_engine(url)
    sessions = make_session_factory(engine)
    start.wait()
    for i in range(PER_WRITER):
        with transaction(sessions) as session:
            audit.append(session, actor_id=None, action="test", entity="writer", entity_id=writer, after={"i": i})
    engine.dispose()


def test_writers_beginning_early_and_taking_the_turn_late_keep_one_chain(app, settings):
    start, errors = threading.Barrier(12), []

    def early(n: int):  # as every writing request but logging an attempt: a writer from the start
        for i in range(PER_WRITER):
            with transaction(app.state.sessions) as session:
                audit.append(session, actor_id=None, action="test", entity="early", entity_id=n, after={"i": i})

    def late(n: int):  # as logging an attempt: reads first, the chain's turn only at the commit
        for i in range(PER_WRITER):
            with app.state.sessions() as session:
                mark_late_turn(session)
                session.scalar(select(func.count()).select_from(AuditEvent))
                audit.append(session, actor_id=None, action="test", entity="late", entity_id=n, after={"i": i})
                session.commit()

    def run(work, n):
        try:
            start.wait()
            work(n)
        except Exception as error:  # collected, so the test shows it
            errors.append(error)

    threads = [threading.Thread(target=run, args=(early if n % 2 else late, n)) for n in range(12)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert errors == []
    assert_one_chain(settings.database_url, 12 * PER_WRITER)


def test_separate_processes_appending_at_once_keep_one_chain(app, settings):
    """Four processes, each its own engine and pool: on SQLite they meet at the file's write lock, on
    PostgreSQL at the chain's advisory lock."""
    spawn = multiprocessing.get_context("spawn")
    start = spawn.Barrier(4)
    writers = [spawn.Process(target=append_from_its_own_engine, args=(settings.database_url, n, start))
               for n in range(4)]
    for w in writers:
        w.start()
    for w in writers:
        w.join(timeout=120)
    assert [w.exitcode for w in writers] == [0, 0, 0, 0]
    assert_one_chain(settings.database_url, 4 * PER_WRITER)


def test_an_attempt_logged_while_the_sortie_is_signed_is_in_the_signed_record_or_refused(app, world, settings):
    """Attempts and the signature race through the app: each attempt is answered 201 and is part of what
    was signed, or 409 and is not stored. Never an attempt in a signed sortie that its signature omits."""
    with app.state.sessions() as session:
        sortie = make_sortie(session, world, attempts=1)
        token = people.issue_token(session, person=session.merge(world.instructor), label="tablet")
        session.commit()
    body = {"maneuver": "turn_180", "termination": "to_hover", "descent_kias": 63}

    attempt = (f"/api/v1/sorties/{sortie.id}/attempts", body)
    sign = (f"/api/v1/sorties/{sortie.id}/sign", {"password": PASSWORD})
    answers = post_at_once(app, token, [attempt] * 6 + [sign] + [attempt] * 6)
    signed = answers.pop(6)
    assert signed.status_code == 200
    assert {a.status_code for a in answers} <= {201, 409}
    engine = make_engine(settings.database_url)
    with make_session_factory(engine)() as session:
        stored = session.scalars(select(Attempt.sequence).where(Attempt.sortie_id == sortie.id)).all()
        assert sorted(stored) == list(range(1, 2 + sum(a.status_code == 201 for a in answers)))
        signature = session.scalar(select(Signature).where(Signature.sortie_id == sortie.id))
        assert signature.content_sha256 == content_hash(session.get(type(sortie), sortie.id))
        assert audit.verify(session).ok
    engine.dispose()


def test_a_writer_working_on_the_event_loop_and_late_attempts_at_once_all_succeed(settings, world):
    """An `async def` route that writes does its database work on the event loop; late attempt writers
    commit from the event loop too, once their thread returns. Were both let in at once, the loop would
    wait for SQLite's lock held by a late writer whose commit needs the loop, until the busy timeout
    ('database is locked', a 500). The writer queue runs queued writers alone, so every request
    succeeds and the chain holds."""
    from fastapi import Request

    from server.app import create_app
    from server.db import begin_writing

    app = create_app(settings)

    @app.post("/test-only/write-on-the-loop")
    async def write_on_the_loop(request: Request):
        with app.state.sessions() as session:
            begin_writing(session)
            audit.append(session, actor_id=None, action="create", entity="test", entity_id="loop")
            session.commit()
        return {"ok": True}

    try:
        with app.state.sessions() as session:
            sortie = make_sortie(session, world, attempts=0)
            token = people.issue_token(session, person=session.merge(world.instructor), label="tablet")
            session.commit()
        attempt = (f"/api/v1/sorties/{sortie.id}/attempts", {"maneuver": "straight_in", "termination": "power_recovery"})
        loop_writer = ("/test-only/write-on-the-loop", {})
        answers = post_at_once(app, token, ([attempt] * 4 + [loop_writer]) * 12)
        assert [a.status_code for a in answers] == ([201] * 4 + [200]) * 12
        with app.state.sessions() as session:
            assert audit.verify(session).ok
    finally:
        app.state.engine.dispose()
