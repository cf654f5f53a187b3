"""Pages: "My account" (one's own password, API tokens and calendar links) and a password reset by a chief pilot.

At the top of the layers, beside the app: the page gathers what people and currency each keep.
"""
from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from server.currency import feeds
from server.deps import DbSession
from server.errors import Invalid
from server.people import service as people
from server.people.deps import PageUser, SetupUser
from server.types import utcnow
from server.web import render

router = APIRouter(include_in_schema=False)


def _account_page(request: Request, db, person, *, error: str | None = None, message: str | None = None,
                  status_code: int = 200):
    return render(request, "people/account.html", {
        "person": person, "tokens": people.list_tokens(db, person=person),
        "feeds": feeds.list_feeds(db, owner=person), "error": error, "message": message, "now": utcnow(),
    }, status_code=status_code)


@router.get("/account", name="my_account")
def my_account(request: Request, db: DbSession, person: PageUser, changed: bool = False):
    """Change your own password; see and revoke your API tokens and calendar links."""
    return _account_page(request, db, person, message="Your new password is set." if changed else None)


@router.post("/account/password", name="my_password_change")
async def my_password_change(request: Request, db: DbSession, person: PageUser):
    form = await request.form()
    current, new, again = (str(form.get(name, "")) for name in ("current_password", "new_password", "new_password_again"))
    if new != again:
        return _account_page(request, db, person, error="The two new passwords differ; type them again.",
                             status_code=422)
    try:
        people.change_own_password(db, person=person, current_password=current, new_password=new,
                                   client=request.client.host if request.client else "",
                                   keep_session_id=request.state.user_session.id)
    except Invalid as refusal:  # a wrong current password stays on record: the answer is a page, not a raise
        return _account_page(request, db, person, error=refusal.message, status_code=422)
    return RedirectResponse(request.url_for("my_account").include_query_params(changed="true"), status_code=303)


@router.post("/account/tokens/{token_id}/revoke", name="my_token_revoke")
def my_token_revoke(request: Request, db: DbSession, person: PageUser, token_id: int):
    people.revoke_token(db, actor=person, token_id=token_id)
    return RedirectResponse(request.url_for("my_account"), status_code=303)


@router.post("/account/calendar-links/{feed_id}/revoke", name="my_calendar_link_revoke")
def my_calendar_link_revoke(request: Request, db: DbSession, person: PageUser, feed_id: int):
    feeds.revoke_feed(db, actor=person, feed_id=feed_id)
    return RedirectResponse(request.url_for("my_account"), status_code=303)


@router.get("/setup/people/{person_id}/reset-password", name="reset_password_page")
def reset_password_page(request: Request, db: DbSession, person: SetupUser, person_id: int):
    """What a reset does, and the button that does it."""
    return render(request, "people/reset_password.html", {
        "person": person, "subject": people.get_person(db, person_id), "temporary": None})


@router.post("/setup/people/{person_id}/reset-password", name="reset_password")
def reset_password(request: Request, db: DbSession, person: SetupUser, person_id: int):
    """Reset: a one-time password shown once; every session, token and calendar link of the person ends."""
    subject = people.get_person(db, person_id)
    temporary = people.reset_password(db, actor=person, person=subject)
    return render(request, "people/reset_password.html", {
        "person": person, "subject": subject, "temporary": temporary})
