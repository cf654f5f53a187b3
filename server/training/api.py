"""JSON API: programs (syllabi) and enrolment."""
from fastapi import APIRouter

from server.deps import DbSession
from server.people.deps import ApiUser
from server.training import programs
from server.training.models import Enrolment
from server.errors import NotFound
from server.training.program_schemas import (
    CheckInstructorAssign, EnrolmentCreate, EnrolmentRead, ProgramRead, ProgramWrite,
)

router = APIRouter(tags=["training"])


def enrolment_read(enrolment: Enrolment) -> EnrolmentRead:
    return EnrolmentRead(id=enrolment.id, program_id=enrolment.program_id, student_id=enrolment.student_id,
                         instructor_id=enrolment.instructor_id, check_instructor_id=enrolment.check_instructor_id,
                         started_on=enrolment.started_on,
                         active=enrolment.active)


@router.get("/programs", response_model=list[ProgramRead])
def list_programs(db: DbSession, person: ApiUser):
    """Every syllabus with its stages, lessons and lesson requirements."""
    return [programs.program_record(p) for p in programs.list_programs(db)]


@router.post("/programs", response_model=ProgramRead, status_code=201)
def create_program(data: ProgramWrite, db: DbSession, person: ApiUser):
    """A chief pilot writes a new syllabus."""
    return programs.program_record(programs.create_program(db, actor=person, data=data))


@router.get("/programs/{program_id}", response_model=ProgramRead)
def get_program(program_id: int, db: DbSession, person: ApiUser):
    return programs.program_record(programs.get_program(db, program_id))


@router.put("/programs/{program_id}", response_model=ProgramRead)
def replace_program(program_id: int, data: ProgramWrite, db: DbSession, person: ApiUser):
    """Edit a syllabus: send it whole; items keep their ids, new ones have none, left-out ones go."""
    program = programs.get_program(db, program_id)
    return programs.program_record(programs.update_program(db, actor=person, program=program, data=data))


@router.post("/programs/{program_id}/enrolments", response_model=EnrolmentRead, status_code=201)
def enrol(program_id: int, data: EnrolmentCreate, db: DbSession, person: ApiUser):
    """Enrol a student with their usual instructor."""
    program = programs.get_program(db, program_id)
    return enrolment_read(programs.enrol(db, actor=person, program=program, data=data))


@router.put("/enrolments/{enrolment_id}/check-instructor", response_model=EnrolmentRead)
def assign_check_instructor(enrolment_id: int, data: CheckInstructorAssign, db: DbSession, person: ApiUser):
    """A chief pilot names the instructor who signs this student's stage checks (null: none)."""
    enrolment = db.get(Enrolment, enrolment_id)
    if enrolment is None:
        raise NotFound("No such enrolment.")
    return enrolment_read(programs.assign_check_instructor(db, actor=person, enrolment=enrolment,
                                                           check_instructor_id=data.check_instructor_id))
