"""Strangers cost little: bodies have a limit checked before reading, their refusals are audited in
aggregate, no secret of a path reaches the audit chain, and wrong sign-ins do not hold up saves.

Yardsticks: RFC 9110 section 15.5.14 (413 Content Too Large); OWASP ASVS 5.0 V4/V13 resource limits
and V16 logging without secrets (section numbers from memory); the writer queue's own promise
(DEVELOPERS.md: writing requests take turns, reads carry on beside them).
"""
import asyncio
import json
import re
import threading
import time
from concurrent.futures import ThreadPoolExecutor

import pytest
from fastapi.testclient import TestClient
from sqlalchemy import func, select

from server.app import create_app
from server.request_bodies import BodyLimit
from server.config import Settings
from server.people import service as people
from server.people.models import Person
from server.records.export import export_json
from server.records.models import AuditEvent
from tests.conftest import csrf_from
from tests.support import make_sortie

MB = 1_000_000


def _asgi_post(app, path: str, *, content_length: int) -> tuple[int | None, int]:
    """POST straight into the ASGI app; returns the status and how often the body was asked for."""
    asked = 0
    status = None
    chunk = 100_000

    async def receive():
        nonlocal asked
        asked += 1
        size = min(chunk, content_length - (asked - 1) * chunk)
        if size <= 0:
            return {"type": "http.disconnect"}
        return {"type": "http.request", "body": b"x" * size, "more_body": asked * chunk < content_length}

    async def send(message):
        nonlocal status
        if message["type"] == "http.response.start":
            status = message["status"]

    scope = {"type": "http", "asgi": {"version": "3.0"}, "http_version": "1.1", "method": "POST", "scheme": "http",
             "path": path, "raw_path": path.encode(), "query_string": b"", "root_path": "",
             "headers": [(b"host", b"testserver"), (b"content-type", b"application/json"),
                         (b"content-length", str(content_length).encode())],
             "client": ("127.0.0.1", 5000), "server": ("testserver", 80), "state": {}}
    # A loop of its own in a thread of its own: a page test earlier in the run may have left
    # Playwright's loop running in this thread, where asyncio.run refuses to start.
    with ThreadPoolExecutor(max_workers=1) as pool:
        pool.submit(asyncio.run, app(scope, receive, send)).result()
    return status, asked


def test_a_declared_body_over_the_limit_is_refused_before_a_byte_is_read(app):
    status, asked = _asgi_post(app, "/api/v1/sorties", content_length=30 * MB)
    assert (status, asked) == (413, 0)


def test_a_streamed_body_is_refused_once_it_passes_the_limit(app, world, db):
    token = people.issue_token(db, person=db.get(Person, world.instructor.id))
    db.commit()
    client = TestClient(app, base_url="http://testserver", headers={"Authorization": f"Bearer {token}"})
    sent = 0

    def chunks():  # no Content-Length: sent chunked, counted as it arrives
        nonlocal sent
        for _ in range(40):
            sent += 1
            yield b" " * 64_000

    answer = client.post("/api/v1/sorties", content=chunks(), headers={"Content-Type": "application/json"})
    assert answer.status_code == 413 and "larger than Flarebook accepts" in answer.json()["detail"]
    small = client.post("/api/v1/sorties", content=b"{}", headers={"Content-Type": "application/json"})
    assert small.status_code == 422, "an ordinary body still reaches validation"


def test_track_uploads_have_their_own_larger_limit(settings):
    limits = BodyLimit(None, default_bytes=MB, larger=[(p, 20 * MB) for p in settings.track_upload_paths])
    assert limits.limit_for("/api/v1/sorties/12/tracks") == 20 * MB
    assert limits.limit_for("/sorties/12/tracks") == 20 * MB
    assert limits.limit_for("/api/v1/sorties/12") == MB
    assert limits.limit_for("/api/v1/sorties/12/tracks/extra") == MB
    assert Settings().max_body_bytes == MB
    app = create_app(Settings(database_url=settings.database_url, track_upload_max_bytes=3 * MB))
    try:
        assert _asgi_post(app, "/api/v1/sorties/1/tracks", content_length=2 * MB)[0] != 413
        assert _asgi_post(app, "/api/v1/sorties/1/tracks", content_length=4 * MB)[0] == 413
    finally:
        app.state.engine.dispose()


def _audit_rows(db) -> int:
    db.expire_all()
    return db.scalar(select(func.count()).select_from(AuditEvent))


def test_refused_strangers_are_counted_in_one_entry_not_a_row_each(app, anonymous, world, db):
    before = _audit_rows(db)
    for n in range(30):
        assert anonymous.get(f"/calendar/cal_guess{n}.ics").status_code == 404
    assert _audit_rows(db) == before, "no row per stranger"
    app.state.stranger_tally.write(app.state.sessions)  # the period ends (or the server stops)
    entry = db.scalars(select(AuditEvent).order_by(AuditEvent.seq.desc())).first()
    assert entry.action == "access_refused_strangers" and entry.after["count"] == 30
    assert entry.after["by_route"] == {"GET /calendar/{secret}.ics 404": 30}
    assert _audit_rows(db) == before + 1


def test_the_tally_is_written_when_its_period_is_over(database_url, world, db):
    app = create_app(Settings(database_url=database_url, stranger_audit_seconds=0))
    try:
        stranger = TestClient(app, base_url="http://testserver")
        before = _audit_rows(db)
        stranger.get("/calendar/cal_guess.ics")
        assert _audit_rows(db) == before + 1
    finally:
        app.state.engine.dispose()


def test_no_calendar_secret_reaches_the_audit_chain_or_the_export(app, anonymous, student_client, db, world):
    page = student_client.form_post("/currency/calendar", {"whose": "me"})
    url = re.search(r'class="feed-url">http://testserver([^<]+)<', page.text).group(1)
    secret = re.search(r"/calendar/([^/]+)\.ics", url).group(1)
    feed_id = student_client.get("/api/v1/calendar-feeds").json()[0]["id"]
    assert student_client.api("DELETE", f"/api/v1/calendar-feeds/{feed_id}").status_code == 204
    assert anonymous.get(url).status_code == 404  # a revoked link
    assert student_client.get(url).status_code == 404  # the same with a browser session beside it
    app.state.stranger_tally.write(app.state.sessions)
    with app.state.sessions() as session:
        exported = export_json(session)
    assert secret not in exported
    assert "/calendar/{secret}.ics" in exported


def test_wrong_sign_ins_do_not_hold_up_an_instructors_save(settings, world, db, monkeypatch):
    """Bounded, not timed to the millisecond: each wrong password takes 0.5 s to check here; if the
    checks took turns with the writers, the save would wait behind all six (3 s)."""
    sortie = make_sortie(db, world)
    token = people.issue_token(db, person=db.get(Person, world.instructor.id))
    db.commit()

    def slow_verify(password_hash, password):
        time.sleep(0.5)
        return False

    monkeypatch.setattr(people, "verify_password", slow_verify)
    app = create_app(settings)
    forms = []
    for _ in range(6):  # a pre-sign-in session (cookie and CSRF token) per guesser
        page = TestClient(app, base_url="http://testserver").get("/signin")
        forms.append((page.cookies["flarebook"], csrf_from(page.text)))
    answers = []
    try:
        with TestClient(app, base_url="http://testserver") as shared:  # one event loop, one writer queue

            def guess(cookie, csrf):
                answers.append(shared.post("/signin", headers={"Cookie": f"flarebook={cookie}"}, data={
                    "email": world.student.email, "password": "guess", "csrf_token": csrf}).status_code)

            threads = [threading.Thread(target=guess, args=form) for form in forms]
            for thread in threads:
                thread.start()
            time.sleep(0.2)  # the guesses are being checked
            started = time.monotonic()
            saved = shared.post(f"/api/v1/sorties/{sortie.id}/attempts", headers={"Authorization": f"Bearer {token}"},
                                json={"maneuver": "straight_in", "termination": "power_recovery"})
            took = time.monotonic() - started
            for thread in threads:
                thread.join()
    finally:
        app.state.engine.dispose()
    assert saved.status_code == 201, saved.text
    assert answers == [401] * 6
    assert took < 2.0, f"the save waited {took:.1f} s behind password checks"
