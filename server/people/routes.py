"""Pages: sign-in and sign-out."""
from typing import Annotated

from fastapi import APIRouter, Form, Request
from fastapi.responses import RedirectResponse

from server.deps import DbSession, check_csrf, cookie_name, secure_cookies
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


@router.post("/signin")
async def signin(request: Request, db: DbSession, user_session: BrowserSession,
                 email: Annotated[str, Form(max_length=254)], password: Annotated[str, Form(max_length=1000)]):
    if user_session is None:
        return RedirectResponse("/signin", status_code=303)
    await check_csrf(request, user_session.csrf_token)
    client = request.client.host if request.client else ""
    try:
        person = people.authenticate(db, email=email, password=password, client=client)
    except Unauthorized as refusal:
        school = people.school(db)
        return render(request, "people/signin.html", {
            "error": refusal.message, "email": email, "school": school,
            "demo_sign_ins": DEMO_SIGN_INS if school.demo else (), "demo_password": DEMO_PASSWORD,
        }, status_code=401)
    people.end_session(db, row=user_session)
    cookie_value, _ = people.start_session(db, person=person)
    response = RedirectResponse("/", status_code=303)
    _set_cookie(request, response, cookie_value)
    return response


@router.post("/signout")
async def signout(request: Request, db: DbSession, person: PageUser):
    people.end_session(db, row=request.state.user_session)
    response = RedirectResponse("/signin", status_code=303)
    response.delete_cookie(cookie_name(request), path="/")
    return response
