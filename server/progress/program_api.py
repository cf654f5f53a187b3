"""JSON API: a student's progress through their program, lesson confirmation and stage checks."""
from fastapi import APIRouter

from server.deps import DbSession
from server.errors import NotFound
from server.people.deps import ApiUser
from server.progress import programs
from server.progress.program_schemas import (
    LessonProgressRead,
    ProgressRead,
    RequirementProgressRead,
    StageCheckCreate,
    StageCheckRead,
    StageProgressRead,
)
from server.progress.service import viewable_pilot
from server.training import programs as syllabi
from server.training.api import enrolment_read
from server.training.models import StageCheck

router = APIRouter(tags=["training"])


def progress_read(progress: programs.ProgramProgress) -> ProgressRead:
    current_stage, current_lesson = progress.current_stage, progress.current_lesson
    return ProgressRead(
        enrolment=enrolment_read(progress.enrolment), program_name=progress.program.name,
        current_stage_id=current_stage.stage.id if current_stage else None,
        current_lesson_id=current_lesson.lesson.id if current_lesson else None,
        stages=[
            StageProgressRead(
                stage_id=sp.stage.id, name=sp.stage.name, check_passed=sp.passed,
                checked_by_id=sp.check.checker_id if sp.check else None,
                checked_at=sp.check.signed_at if sp.check else None,
                lessons=[
                    LessonProgressRead(
                        lesson_id=lp.lesson.id, name=lp.lesson.name, attempts_met=lp.attempts_met,
                        confirmed_by_id=lp.completion.confirmed_by_id if lp.completion else None,
                        confirmed_at=lp.completion.confirmed_at if lp.completion else None,
                        requirements=[
                            RequirementProgressRead(
                                requirement_id=rp.requirement.id, maneuver=rp.requirement.maneuver,
                                termination=rp.requirement.termination,
                                attempts_needed=rp.requirement.attempts_needed, attempts_counted=rp.counted,
                                met=rp.met)
                            for rp in lp.requirements
                        ])
                    for lp in sp.lessons
                ])
            for sp in progress.stages
        ],
    )


def check_read(check: StageCheck) -> StageCheckRead:
    return StageCheckRead(id=check.id, enrolment_id=check.enrolment_id, stage_id=check.stage_id,
                          checker_id=check.checker_id, passed=check.passed, remarks=check.remarks,
                          signed_at=check.signed_at)


@router.get("/people/{pilot_id}/program", response_model=ProgressRead)
def program_progress(pilot_id: int, db: DbSession, person: ApiUser):
    """Where the student stands in their program: counted attempts, confirmations, stage checks."""
    viewable_pilot(db, viewer=person, pilot_id=pilot_id)
    enrolment = syllabi.active_enrolment(db, student_id=pilot_id)
    if enrolment is None:
        raise NotFound("This person is not enrolled in a program.")
    return progress_read(programs.program_progress(db, enrolment=enrolment))


@router.post("/enrolments/{enrolment_id}/lessons/{lesson_id}/confirm", response_model=ProgressRead)
def confirm_lesson(enrolment_id: int, lesson_id: int, db: DbSession, person: ApiUser):
    """An instructor confirms a lesson the signed records meet."""
    enrolment = programs.get_enrolment(db, enrolment_id=enrolment_id, viewer=person)
    programs.confirm_lesson(db, actor=person, enrolment=enrolment, lesson_id=lesson_id)
    return progress_read(programs.program_progress(db, enrolment=enrolment))


@router.post("/enrolments/{enrolment_id}/stage-checks", response_model=StageCheckRead, status_code=201)
def sign_stage_check(enrolment_id: int, data: StageCheckCreate, db: DbSession, person: ApiUser):
    """A chief pilot or the enrolment's assigned check instructor signs a stage check."""
    enrolment = programs.get_enrolment(db, enrolment_id=enrolment_id, viewer=person)
    return check_read(programs.sign_stage_check(db, actor=person, enrolment=enrolment, stage_id=data.stage_id,
                                                passed=data.passed, remarks=data.remarks,
                                                password=data.password))
