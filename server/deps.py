"""Request dependencies: the database session, the signed-in person, CSRF checks."""
from collections.abc import Iterator
from typing import Annotated

from fastapi import Depends, Request
from sqlalchemy.orm import Session

from server.db import begin_writing
from server.errors import Forbidden, Unauthorized
from server.people import service as people
from server.people.models import Person, UserSession
from server.people.security import same_secret

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
    """One transaction per request, committed before the answer is sent."""
    with request.app.state.sessions() as session:
        if request.method in UNSAFE_METHODS:
            begin_writing(session)  # writers queue for SQLite's write lock from the start
        try:
            yield session
            session.commit()
        except BaseException:
            session.rollback()
            raise


DbSession = Annotated[Session, Depends(get_db, scope="function")]


class SignInRequired(Exception):
    """A page was asked for without a live session."""


class OwnPasswordRequired(Exception):
    """The person signed in with a password someone else set: they choose their own first."""


# What a person whose password was reset may still reach: choosing their own, and leaving.
OWN_PASSWORD_PATHS = frozenset({"/account", "/account/password", "/signout", "/api/v1/me", "/api/v1/me/password"})


def _needs_own_password(request: Request, person: Person) -> bool:
    return person.password_must_change and request.url.path not in OWN_PASSWORD_PATHS


def browser_session(request: Request, db: DbSession) -> UserSession | None:
    value = request.cookies.get(cookie_name(request))
    if not value:
        return None
    row = people.load_session(db, cookie_value=value, settings=request.app.state.settings)
    if row is not None:
        # Kept as plain text so an error page can still offer a form after a rollback.
        request.state.csrf_token = row.csrf_token
    return row


BrowserSession = Annotated[UserSession | None, Depends(browser_session)]


async def _submitted_csrf(request: Request) -> str:
    header = request.headers.get(CSRF_HEADER)
    if header:
        return header
    content_type = request.headers.get("content-type", "")
    if content_type.startswith(("application/x-www-form-urlencoded", "multipart/form-data")):
        form = await request.form()
        return str(form.get(CSRF_FIELD, ""))
    return ""


async def check_csrf(request: Request, user_session: UserSession) -> None:
    if request.method in UNSAFE_METHODS:
        submitted = await _submitted_csrf(request)
        if not submitted or not same_secret(submitted, user_session.csrf_token):
            raise Forbidden("This form has expired or did not come from Flarebook. Reload the page and try again.")


async def page_user(request: Request, db: DbSession, user_session: BrowserSession) -> Person:
    """The signed-in person for a page or fragment; state-changing requests must carry the CSRF token."""
    if user_session is None or user_session.person_id is None:
        raise SignInRequired()
    person = db.get(Person, user_session.person_id)
    if person is None or not person.active:
        raise SignInRequired()
    request.state.person_id = person.id
    await check_csrf(request, user_session)
    request.state.user_session = user_session
    if _needs_own_password(request, person):
        raise OwnPasswordRequired()
    return person


async def api_user(request: Request, db: DbSession, user_session: BrowserSession) -> Person:
    """A script's bearer token, or a browser session plus the CSRF header for changes."""
    authorization = request.headers.get("authorization", "")
    if authorization.lower().startswith("bearer "):
        person = people.person_for_token(db, authorization[7:].strip())
        if person is None:
            raise Unauthorized("That API token is not valid.")
        request.state.person_id = person.id  # names the actor if an access is refused
        if _needs_own_password(request, person):
            raise Forbidden("Your password was reset: choose your own with POST /api/v1/me/password first.")
        return person
    if user_session is None or user_session.person_id is None:
        raise Unauthorized("Sign in, or send Authorization: Bearer <token>.")
    person = db.get(Person, user_session.person_id)
    if person is None or not person.active:
        raise Unauthorized("Sign in, or send Authorization: Bearer <token>.")
    request.state.person_id = person.id
    await check_csrf(request, user_session)
    request.state.user_session = user_session
    if _needs_own_password(request, person):
        raise Forbidden("Your password was reset: choose your own with POST /api/v1/me/password first.")
    return person


PageUser = Annotated[Person, Depends(page_user)]
ApiUser = Annotated[Person, Depends(api_user)]


def require_role(person: Person, *roles: str) -> None:
    if not person.has_role(*roles):
        raise Forbidden("Your role does not allow this.")


def setup_user(person: PageUser) -> Person:
    """The signed-in chief pilot or administrator, for the Setup pages."""
    require_role(person, "chief_pilot", "admin")
    return person


SetupUser = Annotated[Person, Depends(setup_user)]
