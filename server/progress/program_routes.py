"""Pages: programs (syllabus setup and enrolment), lesson confirmation and stage checks.

The program pages live here, above logbook, because they name only the people the viewer may see.
"""
from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse
from pydantic import ValidationError
from sqlalchemy import select

from server.deps import DbSession
from server.errors import FlarebookError, Invalid
from server.logbook import access
from server.people import service as people
from server.people.deps import PageUser
from server.people.models import Person
from server.progress import programs as progress
from server.progress.routes import file_context
from server.training import programs
from server.training.models import Enrolment, Program, Standard
from server.training.program_schemas import EnrolmentCreate, ProgramWrite
from server.vocabulary import MANEUVERS, TERMINATIONS
from server.web import render

router = APIRouter(include_in_schema=False)


def _plain_write(record: dict) -> dict:
    """A program record as ProgramWrite input (positions follow the list order)."""
    return {
        "name": record["name"], "level": record["level"], "description": record["description"],
        "stages": [
            {"id": s["id"], "name": s["name"], "lessons": [
                {"id": lesson["id"], "name": lesson["name"], "requirements": lesson["requirements"]}
                for lesson in s["lessons"]
            ]}
            for s in record["stages"]
        ],
    }


def _find(items: list[dict], item_id: str | None) -> dict:
    found = next((item for item in items if str(item["id"]) == str(item_id)), None)
    if found is None:
        raise Invalid("That part of the program no longer exists; reload the page.")
    return found


def _stage_lesson(record: dict, form) -> tuple[dict, dict]:
    stage = _find(record["stages"], form.get("stage_id"))
    return stage, _find(stage["lessons"], form.get("lesson_id"))


def _name(form) -> str:
    return str(form.get("name", "")).strip()


# Each edit of the setup page changes the program's record and saves it through update_program,
# so the page and the API edit a syllabus the same way.
def _details(record, form):
    record.update(name=_name(form), level=str(form.get("level", "")).strip(),
                  description=str(form.get("description", "")))


def _add_stage(record, form):
    record["stages"].append({"id": None, "name": _name(form), "lessons": []})


def _rename_stage(record, form):
    _find(record["stages"], form.get("stage_id"))["name"] = _name(form)


def _remove_stage(record, form):
    record["stages"].remove(_find(record["stages"], form.get("stage_id")))


def _add_lesson(record, form):
    _find(record["stages"], form.get("stage_id"))["lessons"].append({"id": None, "name": _name(form),
                                                                     "requirements": []})


def _rename_lesson(record, form):
    _stage_lesson(record, form)[1]["name"] = _name(form)


def _remove_lesson(record, form):
    stage, lesson = _stage_lesson(record, form)
    stage["lessons"].remove(lesson)


def _add_requirement(record, form):
    _, lesson = _stage_lesson(record, form)
    requirement = {"maneuver": form.get("maneuver"), "termination": form.get("termination"),
                   "standard_id": form.get("standard_id") or None}
    if form.get("attempts_needed"):
        requirement["attempts_needed"] = form.get("attempts_needed")
    lesson["requirements"].append(requirement)


def _remove_requirement(record, form):
    _, lesson = _stage_lesson(record, form)
    lesson["requirements"].remove(_find(lesson["requirements"], form.get("requirement_id")))


EDITS = {
    "details": _details, "add_stage": _add_stage, "rename_stage": _rename_stage, "remove_stage": _remove_stage,
    "add_lesson": _add_lesson, "rename_lesson": _rename_lesson, "remove_lesson": _remove_lesson,
    "add_requirement": _add_requirement, "remove_requirement": _remove_requirement,
}


def _validation_message(error: ValidationError) -> str:
    return "; ".join(f"{'.'.join(str(p) for p in e['loc'] if not isinstance(p, int))}: "
                     f"{e['msg'].removeprefix('Value error, ')}" for e in error.errors())


def _program_context(db, person: Person, program: Program) -> dict:
    enrolments = list(db.scalars(select(Enrolment).where(Enrolment.program_id == program.id)
                                 .order_by(Enrolment.active.desc(), Enrolment.started_on.desc())))
    everyone = access.visible_people(db, viewer=person)
    return {
        "person": person, "program": program, "can_edit": person.has_role(*programs.SETUP_ROLES),
        "standards": list(db.scalars(select(Standard).where(Standard.active.is_(True)).order_by(Standard.name))),
        "maneuvers": MANEUVERS, "terminations": TERMINATIONS,
        "enrolments": enrolments, "names": {p.id: p.name for p in everyone},
        "students": [p for p in everyone if p.active and p.has_role("student")],
        "instructors": [p for p in everyone if p.active and p.has_role("instructor")],
        "today": people.school_today(db).isoformat(),
    }


@router.get("/programs", name="program_list")
def program_list(request: Request, db: DbSession, person: PageUser):
    """Every syllabus; chief pilots start a new one here."""
    return render(request, "training/program_list.html", {
        "person": person, "programs": programs.list_programs(db),
        "can_edit": person.has_role(*programs.SETUP_ROLES), "values": {}, "message": None,
    })


@router.post("/programs", name="program_create")
async def program_create(request: Request, db: DbSession, person: PageUser):
    form = await request.form()
    values = {"name": _name(form), "level": str(form.get("level", "")).strip() or "private",
              "description": str(form.get("description", ""))}
    try:
        program = programs.create_program(db, actor=person, data=ProgramWrite.model_validate(values))
    except ValidationError as error:
        message, status = _validation_message(error), 422
    except FlarebookError as error:
        message, status = error.message, error.status_code
    else:
        return RedirectResponse(request.url_for("program_page", program_id=program.id), status_code=303)
    return render(request, "training/program_list.html", {
        "person": person, "programs": programs.list_programs(db), "can_edit": True, "values": values,
        "message": message,
    }, status_code=status)


@router.get("/programs/{program_id}", name="program_page")
def program_page(program_id: int, request: Request, db: DbSession, person: PageUser):
    """A syllabus: its stages, lessons and requirements; setup forms for chief pilots."""
    program = programs.get_program(db, program_id)
    return render(request, "training/program.html", _program_context(db, person, program))


@router.post("/programs/{program_id}/edit", name="program_edit")
async def program_edit(program_id: int, request: Request, db: DbSession, person: PageUser):
    """One change to the syllabus from the setup page."""
    program = programs.get_program(db, program_id)
    form = await request.form()
    edit = EDITS.get(str(form.get("action", "")))

    def change():
        if edit is None:
            raise Invalid("Unknown change.")
        record = _plain_write(programs.program_record(program))
        edit(record, form)
        programs.update_program(db, actor=person, program=program, data=ProgramWrite.model_validate(record))

    return _change_program(request, db, person, program_id, change)


@router.post("/programs/{program_id}/enrol", name="program_enrol")
async def program_enrol(program_id: int, request: Request, db: DbSession, person: PageUser):
    program = programs.get_program(db, program_id)
    form = await request.form()
    values = {"student_id": form.get("student_id") or None, "instructor_id": form.get("instructor_id") or None,
              "started_on": form.get("started_on") or None}

    def change():
        programs.enrol(db, actor=person, program=program, data=EnrolmentCreate.model_validate(values))

    return _change_program(request, db, person, program_id, change)


def _change_program(request: Request, db, person: Person, program_id: int, change):
    """Make one change and go back to the program; on a refusal, show the page again with the reason."""
    try:
        change()
    except ValidationError as error:
        message, status = _validation_message(error), 422
    except FlarebookError as error:
        message, status = error.message, error.status_code
    else:
        return RedirectResponse(request.url_for("program_page", program_id=program_id), status_code=303)
    db.rollback()
    program = programs.get_program(db, program_id)
    return render(request, "training/program.html", {**_program_context(db, person, program), "message": message},
                  status_code=status)


def _back_to_file(request: Request, db, person: Person, enrolment: Enrolment, message: str, status: int):
    context = file_context(db, person, enrolment.student_id)
    return render(request, "progress/progress_file.html",
                  {**context, "message": message, "message_is_error": True}, status_code=status)


@router.post("/enrolments/{enrolment_id}/lessons/{lesson_id}/confirm", name="lesson_confirm")
def lesson_confirm(enrolment_id: int, lesson_id: int, request: Request, db: DbSession, person: PageUser):
    """An instructor confirms a lesson from the progress file."""
    enrolment = progress.get_enrolment(db, enrolment_id=enrolment_id, viewer=person)
    try:
        progress.confirm_lesson(db, actor=person, enrolment=enrolment, lesson_id=lesson_id)
    except FlarebookError as error:
        db.rollback()
        return _back_to_file(request, db, person, enrolment, error.message, error.status_code)
    return RedirectResponse(request.url_for("progress_file", pilot_id=enrolment.student_id), status_code=303)


@router.post("/enrolments/{enrolment_id}/stage-check", name="stage_check_sign")
async def stage_check_sign(enrolment_id: int, request: Request, db: DbSession, person: PageUser):
    """A chief pilot or the assigned check instructor signs a stage check from the progress file."""
    enrolment = progress.get_enrolment(db, enrolment_id=enrolment_id, viewer=person)
    form = await request.form()
    try:
        stage_id = int(str(form.get("stage_id", "")))
        if form.get("passed") not in ("true", "false"):
            raise Invalid("Choose whether the stage check was passed.")
        progress.sign_stage_check(db, actor=person, enrolment=enrolment, stage_id=stage_id,
                                  passed=form.get("passed") == "true", remarks=str(form.get("remarks", "")),
                                  password=str(form.get("password", "")))
    except ValueError:
        return _back_to_file(request, db, person, enrolment, "Choose a stage to check.", 422)
    except FlarebookError as error:
        return _back_to_file(request, db, person, enrolment, error.message, error.status_code)
    return RedirectResponse(request.url_for("progress_file", pilot_id=enrolment.student_id), status_code=303)
