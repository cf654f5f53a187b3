"""Setup pages for people: add, edit, roles, deactivate, and enrol a new student (chief pilot, admin).

Served by training because a person's page enrols them in a program (training's); accounts are people's.
"""
from fastapi import APIRouter, Query, Request
from fastapi.responses import RedirectResponse
from pydantic import ValidationError
from sqlalchemy import select

from server.deps import DbSession
from server.errors import FlarebookError, Invalid, NotFound
from server.people import service as people
from server.people.deps import SetupUser
from server.people.models import Person
from server.vocabulary import ROLES
from server.training import programs
from server.training.models import Enrolment
from server.training.program_schemas import EnrolmentCreate
from server.web import render

router = APIRouter(include_in_schema=False)

SHOWN = {"active": "In use", "inactive": "Deactivated", "all": "Everyone"}


def _roles(form) -> list[str]:
    return [role for role in form.getlist("roles") if role in ROLES]


@router.get("/setup/people", name="people_list")
def people_list(request: Request, db: DbSession, person: SetupUser,
                show: str = Query(default="active", pattern="^(active|inactive|all)$"),
                role: str | None = Query(default=None, pattern="^(student|instructor|chief_pilot|admin)$")):
    """Everyone who signs in, filtered by state and role in the address."""
    everyone = people.list_people(db)
    shown = [p for p in everyone
             if (show == "all" or p.active == (show == "active")) and (role is None or p.has_role(role))]
    return render(request, "people/setup_list.html", {
        "person": person, "people": shown, "show": show, "role": role, "shows": SHOWN,
        "counts": {"active": sum(p.active for p in everyone), "inactive": sum(not p.active for p in everyone)},
    })


def _form_page(request: Request, person: Person, *, values: dict, message: str | None = None,
               target: Person | None = None, status: int = 200):
    return render(request, "people/setup_form.html", {
        "person": person, "target": target, "values": values, "message": message,
    }, status_code=status)


@router.get("/setup/people/new", name="person_new")
def person_new(request: Request, person: SetupUser, role: str = Query(default="student", pattern="^[a-z_]+$")):
    return _form_page(request, person, values={"roles": [role] if role in ROLES else []})


@router.post("/setup/people/new", name="person_create")
async def person_create(request: Request, db: DbSession, person: SetupUser):
    """Add a person with a first password they are told in person; they change it on My account."""
    form = await request.form()
    values = {"name": str(form.get("name", "")).strip(), "email": str(form.get("email", "")).strip(),
              "roles": _roles(form)}
    try:
        created = people.create_person(db, name=values["name"], email=values["email"], roles=values["roles"],
                                       password=str(form.get("password", "")), actor=person)
    except FlarebookError as error:
        return _form_page(request, person, values=values, message=error.message, status=error.status_code)
    return RedirectResponse(request.url_for("person_page", person_id=created.id).include_query_params(added=1),
                            status_code=303)


def _person_context(db, person: Person, target: Person) -> dict:
    enrolments = list(db.scalars(select(Enrolment).where(Enrolment.student_id == target.id)
                                 .order_by(Enrolment.active.desc(), Enrolment.started_on.desc())))
    program_names = {p.id: p.name for p in programs.list_programs(db)}
    instructors = [p for p in people.list_people(db) if p.active and p.has_role("instructor") and p.id != target.id]
    return {
        "person": person, "target": target, "enrolments": enrolments, "program_names": program_names,
        "programs": programs.list_programs(db), "instructors": instructors,
        "names": {p.id: p.name for p in instructors}, "today": people.school_today(db).isoformat(),
    }


def _person_page_refused(request: Request, db, person: Person, person_id: int, message: str, status: int):
    """The person's page again with the reason, nothing of the refused change kept."""
    db.rollback()
    target = people.get_person(db, person_id)
    return render(request, "people/setup_person.html", {**_person_context(db, person, target), "message": message},
                  status_code=status)


@router.get("/setup/people/{person_id}", name="person_page")
def person_page(person_id: int, request: Request, db: DbSession, person: SetupUser, added: int = 0):
    """One person: roles, state, enrolments, and what a chief pilot does next with them."""
    target = people.get_person(db, person_id)
    return render(request, "people/setup_person.html", {**_person_context(db, person, target), "added": bool(added)})


@router.get("/setup/people/{person_id}/edit", name="person_edit")
def person_edit(person_id: int, request: Request, db: DbSession, person: SetupUser):
    target = people.get_person(db, person_id)
    return _form_page(request, person, target=target,
                      values={"name": target.name, "email": target.email, "roles": target.roles})


@router.post("/setup/people/{person_id}/edit", name="person_update")
async def person_update(person_id: int, request: Request, db: DbSession, person: SetupUser):
    target = people.get_person(db, person_id)
    form = await request.form()
    values = {"name": str(form.get("name", "")).strip(), "email": target.email, "roles": _roles(form)}
    try:
        if target.id == person.id and not set(values["roles"]) & {"chief_pilot", "admin"}:
            raise Invalid("Keep a chief pilot or administrator role on your own account, or you lock yourself "
                          "out of Setup. Ask another chief pilot to change it.")
        people.update_person(db, person=target, actor=person, name=values["name"], roles=values["roles"])
    except FlarebookError as error:
        db.rollback()
        target = people.get_person(db, person_id)
        return _form_page(request, person, target=target, values=values, message=error.message,
                          status=error.status_code)
    return RedirectResponse(request.url_for("person_page", person_id=target.id), status_code=303)


def _set_active(request: Request, db, person: Person, person_id: int, active: bool):
    target = people.get_person(db, person_id)
    if target.id == person.id and not active:
        return render(request, "people/setup_person.html", {
            **_person_context(db, person, target),
            "message": "You cannot deactivate your own account. Ask another chief pilot or administrator.",
        }, status_code=409)
    people.update_person(db, person=target, actor=person, active=active)  # ends their sessions
    return RedirectResponse(request.url_for("person_page", person_id=target.id), status_code=303)


@router.post("/setup/people/{person_id}/deactivate", name="person_deactivate")
def person_deactivate(person_id: int, request: Request, db: DbSession, person: SetupUser):
    """They can no longer sign in; their records stay as they are."""
    return _set_active(request, db, person, person_id, False)


@router.post("/setup/people/{person_id}/reactivate", name="person_reactivate")
def person_reactivate(person_id: int, request: Request, db: DbSession, person: SetupUser):
    return _set_active(request, db, person, person_id, True)


@router.post("/setup/people/{person_id}/enrol", name="person_enrol")
async def person_enrol(person_id: int, request: Request, db: DbSession, person: SetupUser):
    """Enrol this student in a program, with their usual instructor."""
    target = people.get_person(db, person_id)
    form = await request.form()
    values = {"student_id": target.id, "instructor_id": form.get("instructor_id") or None,
              "check_instructor_id": form.get("check_instructor_id") or None,
              "started_on": form.get("started_on") or None}
    try:
        program = programs.get_program(db, int(form.get("program_id") or 0))
        programs.enrol(db, actor=person, program=program, data=EnrolmentCreate.model_validate(values))
    except ValidationError:
        message, status = "Give the date the enrolment starts on, as YYYY-MM-DD.", 422
    except FlarebookError as error:
        message, status = error.message, error.status_code
    except ValueError:
        message, status = "Choose a program.", 422
    else:
        return RedirectResponse(request.url_for("person_page", person_id=target.id), status_code=303)
    return _person_page_refused(request, db, person, person_id, message, status)


@router.post("/setup/people/{person_id}/enrolments/{enrolment_id}/check-instructor",
             name="enrolment_check_instructor")
async def enrolment_check_instructor(person_id: int, enrolment_id: int, request: Request, db: DbSession,
                                     person: SetupUser):
    """Name the instructor who signs this student's stage checks (and so may see their records)."""
    target = people.get_person(db, person_id)
    enrolment = db.get(Enrolment, enrolment_id)
    if enrolment is None or enrolment.student_id != target.id:
        raise NotFound("No such enrolment.")
    form = await request.form()
    try:
        checker = str(form.get("check_instructor_id") or "")
        programs.assign_check_instructor(db, actor=person, enrolment=enrolment,
                                         check_instructor_id=int(checker) if checker else None)
    except ValueError:
        message, status = "Choose an instructor from the list.", 422
    except FlarebookError as error:
        message, status = error.message, error.status_code
    else:
        return RedirectResponse(request.url_for("person_page", person_id=target.id), status_code=303)
    return _person_page_refused(request, db, person, person_id, message, status)
