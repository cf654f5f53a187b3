"""Programs (syllabi): stages, lessons and their requirements; enrolment of students."""
from collections.abc import Sequence

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.errors import Conflict, Forbidden, Invalid, NotFound
from server.people.models import Person
from server.records import audit
from server.training.models import (
    Enrolment,
    Lesson,
    LessonCompletion,
    LessonRequirement,
    Program,
    Stage,
    StageCheck,
    Standard,
)
from server.training.program_schemas import EnrolmentCreate, LessonWrite, ProgramWrite, StageWrite

SETUP_ROLES = ("chief_pilot", "admin")


# ---- the syllabus ------------------------------------------------------------------------------

def list_programs(session: Session) -> list[Program]:
    return list(session.scalars(select(Program).order_by(Program.name)))


def get_program(session: Session, program_id: int) -> Program:
    program = session.get(Program, program_id)
    if program is None:
        raise NotFound("No such program.")
    return program


def program_record(program: Program) -> dict:
    """The syllabus as plain data, for the API and the audit chain."""
    return {
        "id": program.id, "name": program.name, "level": program.level, "description": program.description,
        "stages": [
            {"id": stage.id, "position": stage.position, "name": stage.name, "lessons": [
                {"id": lesson.id, "position": lesson.position, "name": lesson.name, "requirements": [
                    {"id": r.id, "maneuver": r.maneuver, "termination": r.termination,
                     "standard_id": r.standard_id, "attempts_needed": r.attempts_needed}
                    for r in lesson.requirements
                ]}
                for lesson in stage.lessons
            ]}
            for stage in program.stages
        ],
    }


def _require_setup(actor: Person) -> None:
    if not actor.has_role(*SETUP_ROLES):
        raise Forbidden("Only a chief pilot or an administrator sets up programs.")


def _check_names_and_standards(session: Session, data: ProgramWrite, *, program_id: int | None) -> None:
    clash = session.scalar(select(Program.id).where(Program.name == data.name.strip()))
    if clash is not None and clash != program_id:
        raise Conflict(f"A program called {data.name.strip()} exists already.")
    standard_ids = {r.standard_id for s in data.stages for lesson in s.lessons for r in lesson.requirements
                    if r.standard_id is not None}
    known = set(session.scalars(select(Standard.id).where(Standard.id.in_(standard_ids)))) if standard_ids else set()
    if standard_ids - known:
        missing = ", ".join(str(i) for i in sorted(standard_ids - known))
        raise Invalid(f"standard_id {missing} does not name a standard.")


def create_program(session: Session, *, actor: Person, data: ProgramWrite) -> Program:
    """A new syllabus with its stages, lessons and requirements."""
    _require_setup(actor)
    _check_names_and_standards(session, data, program_id=None)
    program = Program(name=data.name.strip(), level=data.level.strip(), description=data.description)
    program.stages = [_new_stage(position, stage) for position, stage in enumerate(data.stages, start=1)]
    session.add(program)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="program", entity_id=program.id,
                 after=program_record(program))
    return program


def _new_stage(position: int, data: StageWrite) -> Stage:
    if data.id is not None:
        raise Invalid(f"Stage id {data.id} belongs to no stage of this program.")
    stage = Stage(position=position, name=data.name.strip())
    stage.lessons = [_new_lesson(p, lesson) for p, lesson in enumerate(data.lessons, start=1)]
    return stage


def _new_lesson(position: int, data: LessonWrite) -> Lesson:
    if data.id is not None:
        raise Invalid(f"Lesson id {data.id} belongs to no lesson of this stage.")
    lesson = Lesson(position=position, name=data.name.strip())
    lesson.requirements = [
        LessonRequirement(maneuver=r.maneuver, termination=r.termination, standard_id=r.standard_id,
                          attempts_needed=r.attempts_needed)
        for r in data.requirements
    ]
    return lesson


def update_program(session: Session, *, actor: Person, program: Program, data: ProgramWrite) -> Program:
    """Replace the syllabus: items with an id are kept and edited, new ones added, missing ones removed.

    A lesson someone has been signed off on, or a stage someone was checked on, stays: removing it
    would erase a training record.
    """
    _require_setup(actor)
    _check_names_and_standards(session, data, program_id=program.id)
    before = program_record(program)
    program.name, program.level, program.description = data.name.strip(), data.level.strip(), data.description
    stages_by_id = {s.id: s for s in program.stages}
    kept_stages = []
    for position, stage_data in enumerate(data.stages, start=1):
        if stage_data.id is None:
            kept_stages.append(_new_stage(position, stage_data))
            continue
        stage = stages_by_id.pop(stage_data.id, None)
        if stage is None:
            raise Invalid(f"Stage id {stage_data.id} belongs to no stage of this program.")
        stage.position, stage.name = position, stage_data.name.strip()
        _update_lessons(session, stage, stage_data.lessons)
        kept_stages.append(stage)
    for removed in stages_by_id.values():
        if session.scalar(select(StageCheck.id).where(StageCheck.stage_id == removed.id).limit(1)):
            raise Conflict(f"Stage “{removed.name}” has stage checks on record and cannot be removed.")
        for lesson in removed.lessons:
            _refuse_if_signed_off(session, lesson)
    program.stages = kept_stages
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="program", entity_id=program.id,
                 before=before, after=program_record(program))
    return program


def _update_lessons(session: Session, stage: Stage, lessons: Sequence[LessonWrite]) -> None:
    by_id = {lesson.id: lesson for lesson in stage.lessons}
    kept = []
    for position, data in enumerate(lessons, start=1):
        if data.id is None:
            kept.append(_new_lesson(position, data))
            continue
        lesson = by_id.pop(data.id, None)
        if lesson is None:
            raise Invalid(f"Lesson id {data.id} belongs to no lesson of stage “{stage.name}”.")
        lesson.position, lesson.name = position, data.name.strip()
        existing = {r.id: r for r in lesson.requirements}
        requirements = []
        for r in data.requirements:
            row = existing.pop(r.id, None) if r.id is not None else None
            if r.id is not None and row is None:
                raise Invalid(f"Requirement id {r.id} belongs to no requirement of lesson “{lesson.name}”.")
            row = row or LessonRequirement()
            row.maneuver, row.termination = r.maneuver, r.termination
            row.standard_id, row.attempts_needed = r.standard_id, r.attempts_needed
            requirements.append(row)
        lesson.requirements = requirements
        kept.append(lesson)
    for removed in by_id.values():
        _refuse_if_signed_off(session, removed)
    stage.lessons = kept


def _refuse_if_signed_off(session: Session, lesson: Lesson) -> None:
    if session.scalar(select(LessonCompletion.id).where(LessonCompletion.lesson_id == lesson.id).limit(1)):
        raise Conflict(f"Lesson “{lesson.name}” has been signed off for a student and cannot be removed.")


# ---- enrolment ---------------------------------------------------------------------------------

def _check_instructor(session: Session, *, check_instructor_id: int | None, student_id: int,
                      usual_instructor_id: int | None) -> None:
    """A check instructor is an active instructor other than the student and their usual instructor."""
    if check_instructor_id is None:
        return
    checker = session.get(Person, check_instructor_id)
    if checker is None or not checker.active or not checker.has_role("instructor"):
        raise Invalid("check_instructor_id does not name an active instructor.")
    if checker.id == student_id:
        raise Invalid("A student cannot check themselves.")
    if checker.id == usual_instructor_id:
        raise Invalid("The check instructor is someone other than the student's usual instructor: "
                      "a stage check is a second pair of eyes.")


def enrol(session: Session, *, actor: Person, program: Program, data: EnrolmentCreate) -> Enrolment:
    """Enrol a student with their usual instructor; an earlier active enrolment ends."""
    _require_setup(actor)
    student = session.get(Person, data.student_id)
    if student is None or not student.active:
        raise Invalid("student_id does not name an active person.")
    if data.instructor_id is not None:
        instructor = session.get(Person, data.instructor_id)
        if instructor is None or not instructor.has_role("instructor"):
            raise Invalid("instructor_id does not name an instructor.")
        if instructor.id == student.id:
            raise Invalid("A student cannot be their own usual instructor.")
    _check_instructor(session, check_instructor_id=data.check_instructor_id, student_id=student.id,
                      usual_instructor_id=data.instructor_id)
    for earlier in session.scalars(select(Enrolment).where(Enrolment.student_id == student.id,
                                                           Enrolment.active.is_(True))):
        earlier.active = False
    enrolment = Enrolment(program_id=program.id, student_id=student.id, instructor_id=data.instructor_id,
                          check_instructor_id=data.check_instructor_id, started_on=data.started_on, active=True)
    session.add(enrolment)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="enrolment", entity_id=enrolment.id,
                 after={"program_id": program.id, "student_id": student.id, "instructor_id": data.instructor_id,
                        "check_instructor_id": data.check_instructor_id,
                        "started_on": data.started_on.isoformat()})
    return enrolment


def assign_check_instructor(session: Session, *, actor: Person, enrolment: Enrolment,
                            check_instructor_id: int | None) -> Enrolment:
    """A chief pilot names (or clears) the instructor who signs this enrolment's stage checks."""
    _require_setup(actor)
    if not enrolment.active:
        raise Conflict("This enrolment has ended; assign a check instructor on the student's active enrolment.")
    _check_instructor(session, check_instructor_id=check_instructor_id, student_id=enrolment.student_id,
                      usual_instructor_id=enrolment.instructor_id)
    before = enrolment.check_instructor_id
    enrolment.check_instructor_id = check_instructor_id
    session.flush()
    audit.append(session, actor_id=actor.id, action="update", entity="enrolment", entity_id=enrolment.id,
                 before={"check_instructor_id": before}, after={"check_instructor_id": check_instructor_id})
    return enrolment


def active_enrolment(session: Session, *, student_id: int) -> Enrolment | None:
    return session.scalar(select(Enrolment).where(Enrolment.student_id == student_id, Enrolment.active.is_(True))
                          .order_by(Enrolment.started_on.desc(), Enrolment.id.desc()).limit(1))
