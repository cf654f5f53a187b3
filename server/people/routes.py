"""Pages: sign-in and sign-out."""
import secrets
from typing import Annotated

from fastapi import APIRouter, Depends, Form, Request
from fastapi.responses import RedirectResponse
from starlette.concurrency import run_in_threadpool

from server.deps import CSRF_FIELD, CSRF_HEADER, DbSession, check_csrf, cookie_name, secure_cookies
from server.errors import Unauthorized
from server.people import service as people
from server.people.deps import BrowserSession, PageUser
from server.web import render

router = APIRouter(include_in_schema=False)

DEMO_SIGN_INS = (
    ("Chief pilot", "chief@larkspur-rotor.example"),
    ("Instructor", "ines@larkspur-rotor.example"),
    ("Instructor", "tomas@larkspur-rotor.example"),
    ("Student", "ada@larkspur-rotor.example"),
)
DEMO_PASSWORD = "flare-demo-2026"


def _set_cookie(request: Request, response, value: str) -> None:
    response.set_cookie(cookie_name(request), value, httponly=True, samesite="lax",
                        secure=secure_cookies(request), path="/")


@router.get("/signin")
def signin_page(request: Request, db: DbSession, user_session: BrowserSession):
    """The sign-in form; a pre-sign-in session carries its CSRF token."""
    new_cookie = None
    if user_session is None:
        new_cookie, user_session = people.start_session(db, person=None)
        request.state.csrf_token = user_session.csrf_token
    school = people.school(db)
    response = render(request, "people/signin.html", {
        "demo_sign_ins": DEMO_SIGN_INS if school.demo else (), "demo_password": DEMO_PASSWORD,
        "school": school,
    })
    if new_cookie:
        _set_cookie(request, response, new_cookie)
    return response


async def checked_sign_in(request: Request, email: Annotated[str, Form(max_length=254)],
                          password: Annotated[str, Form(max_length=1000)]) -> people.SignInCheck | None:
    """The password check, in a read-only session of its own before the request's writing transaction
    begins: the slow hash never holds the write lock (and /signin skips the writer queue). None when
    the form does not carry its pre-sign-in session's CSRF token; the route then refuses it."""
    client = request.client.host if request.client else ""
    cookie = request.cookies.get(cookie_name(request))
    submitted = str((await request.form()).get(CSRF_FIELD, "")) or request.headers.get(CSRF_HEADER, "")

    def check():
        with request.app.state.sessions() as session:
            row = people.load_session(session, cookie_value=cookie, settings=request.app.state.settings) \
                if cookie else None
            if row is None or not submitted or not secrets.compare_digest(submitted.encode(), row.csrf_token.encode()):
                return None
            return people.check_sign_in(session, email=email, password=password, client=client)

    return await run_in_threadpool(check)


CheckedSignIn = Annotated[people.SignInCheck | None, Depends(checked_sign_in)]


@router.post("/signin")
async def signin(request: Request, check: CheckedSignIn, db: DbSession, user_session: BrowserSession,
                 email: Annotated[str, Form(max_length=254)]):
    if user_session is None:
        return RedirectResponse("/signin", status_code=303)
    await check_csrf(request, user_session.csrf_token)
    # The database work in the thread pool: /signin skips the writer queue, and on PostgreSQL its audit
    # entry waits for the chain's lock; waiting on the event loop would stop the request that holds the
    # lock from ever reaching its commit (two sign-ins at once hung there).
    return await run_in_threadpool(_record_sign_in, request, db, user_session, check, email)


def _record_sign_in(request: Request, db, user_session, check: people.SignInCheck | None, email: str):
    try:
        person = people.record_sign_in(db, check=check)
    except Unauthorized as refusal:
        school = people.school(db)
        return render(request, "people/signin.html", {
            "error": refusal.message, "email": email, "school": school,
            "demo_sign_ins": DEMO_SIGN_INS if school.demo else (), "demo_password": DEMO_PASSWORD,
        }, status_code=401)
    people.end_session(db, row=user_session)
    cookie_value, _ = people.start_session(db, person=person)
    # A password someone else set lets its owner in only to choose their own.
    response = RedirectResponse("/account" if person.password_must_change else "/", status_code=303)
    _set_cookie(request, response, cookie_value)
    return response


@router.post("/signout")
def signout(request: Request, db: DbSession, person: PageUser):
    people.end_session(db, row=request.state.user_session)
    response = RedirectResponse("/signin", status_code=303)
    response.delete_cookie(cookie_name(request), path="/")
    return response
