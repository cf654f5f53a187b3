"""Request plumbing: one database session per request, the session cookie's name, CSRF checks.

The signed-in person's dependencies (`PageUser`, `ApiUser`, `SetupUser`) live in `server.people.deps`.
"""
import secrets
from collections.abc import Iterator
from typing import Annotated

from fastapi import Depends, Request
from sqlalchemy.orm import Session

from server.db import begin_writing, mark_late_turn
from server.errors import FlarebookError, Forbidden
from server.write_queue import LATE_TURN_STATE

CSRF_HEADER = "X-CSRF-Token"
CSRF_FIELD = "csrf_token"
UNSAFE_METHODS = {"POST", "PUT", "PATCH", "DELETE"}


def secure_cookies(request: Request) -> bool:
    """Secure cookies when configured, or whenever the request came over HTTPS."""
    return request.app.state.settings.secure_cookies or request.url.scheme == "https"


def cookie_name(request: Request) -> str:
    # The __Host- prefix pins the cookie to this host and path; browsers only accept it over HTTPS.
    return "__Host-flarebook" if secure_cookies(request) else "flarebook"


def get_db(request: Request) -> Iterator[Session]:
    """One transaction per request, committed before the answer is sent: the one place that commits."""
    with request.app.state.sessions() as session:
        if getattr(request.state, LATE_TURN_STATE, False):
            mark_late_turn(session)  # its service takes the turn just before its insert
        elif request.method in UNSAFE_METHODS:
            begin_writing(session)  # writers queue for SQLite's write lock from the start
        try:
            yield session
            session.commit()
        except FlarebookError as refusal:
            if refusal.keep_record:
                session.commit()  # a refusal that must stay on record (a wrong signing password)
            else:
                session.rollback()
            raise
        except BaseException:
            session.rollback()
            raise


DbSession = Annotated[Session, Depends(get_db, scope="function")]


async def _submitted_csrf(request: Request) -> str:
    header = request.headers.get(CSRF_HEADER)
    if header:
        return header
    content_type = request.headers.get("content-type", "")
    if content_type.startswith(("application/x-www-form-urlencoded", "multipart/form-data")):
        form = await request.form()
        return str(form.get(CSRF_FIELD, ""))
    return ""


async def check_csrf(request: Request, expected_token: str) -> None:
    """State-changing requests must carry the session's CSRF token, as a header or a form field."""
    if request.method in UNSAFE_METHODS:
        submitted = await _submitted_csrf(request)
        if not submitted or not secrets.compare_digest(submitted.encode(), expected_token.encode()):
            raise Forbidden("This form has expired or did not come from Flarebook. Reload the page and try again.")
