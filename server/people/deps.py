"""The signed-in person: page and API dependencies, role checks, and idempotent creates keyed by person."""
from typing import Annotated

from fastapi import Depends, Request

from server.deps import DbSession, check_csrf, cookie_name
from server.errors import Forbidden, Unauthorized
from server.idempotency import idempotent_create
from server.people import service as people
from server.people.models import Person, UserSession


class SignInRequired(Exception):
    """A page was asked for without a live session."""


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


async def page_user(request: Request, db: DbSession, user_session: BrowserSession) -> Person:
    """The signed-in person for a page or fragment; state-changing requests must carry the CSRF token."""
    if user_session is None or user_session.person_id is None:
        raise SignInRequired()
    person = db.get(Person, user_session.person_id)
    if person is None or not person.active:
        raise SignInRequired()
    request.state.person_id = person.id
    await check_csrf(request, user_session.csrf_token)
    request.state.user_session = user_session
    return person


async def api_user(request: Request, db: DbSession, user_session: BrowserSession) -> Person:
    """A script's bearer token, or a browser session plus the CSRF header for changes."""
    authorization = request.headers.get("authorization", "")
    if authorization.lower().startswith("bearer "):
        person = people.person_for_token(db, authorization[7:].strip())
        if person is None:
            raise Unauthorized("That API token is not valid.")
        request.state.person_id = person.id  # names the actor if an access is refused
        return person
    if user_session is None or user_session.person_id is None:
        raise Unauthorized("Sign in, or send Authorization: Bearer <token>.")
    person = db.get(Person, user_session.person_id)
    if person is None or not person.active:
        raise Unauthorized("Sign in, or send Authorization: Bearer <token>.")
    request.state.person_id = person.id
    await check_csrf(request, user_session.csrf_token)
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


def setup_api_user(person: ApiUser) -> Person:
    """The chief pilot or administrator calling the API (setup, people, rules)."""
    require_role(person, "chief_pilot", "admin")
    return person


SetupApiUser = Annotated[Person, Depends(setup_api_user)]


IdempotentCreate = idempotent_create(api_user)
