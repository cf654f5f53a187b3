"""Progress through a program: requirements counted from the records, lesson confirmation, stage checks."""
from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.compute.proficiency import AttemptPoint
from server.errors import Conflict, Forbidden, Invalid, NotFound
from server.logbook import access
from server.people.models import Person
from server.people import service as people
from server.progress.service import read_points
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
from server.vocabulary import MANEUVER_LABELS, TERMINATION_LABELS


def get_enrolment(session: Session, *, enrolment_id: int, viewer: Person) -> Enrolment:
    """An enrolment the viewer may see (the student, their instructors, chief pilots); 404 otherwise."""
    enrolment = session.get(Enrolment, enrolment_id)
    if enrolment is None or not access.can_view_pilot(session, viewer=viewer, pilot_id=enrolment.student_id):
        raise NotFound("No such enrolment.")
    return enrolment


# ---- progress through the syllabus -------------------------------------------------------------

@dataclass
class RequirementProgress:
    requirement: LessonRequirement
    counted: int

    @property
    def met(self) -> bool:
        return self.counted >= self.requirement.attempts_needed

    @property
    def still_needed(self) -> int:
        return max(0, self.requirement.attempts_needed - self.counted)

    @property
    def words(self) -> str:
        kind = (f"{MANEUVER_LABELS[self.requirement.maneuver].lower()} autorotation"
                f"{'s' if self.still_needed != 1 else ''} "
                f"({TERMINATION_LABELS[self.requirement.termination].lower()})")
        return f"{self.still_needed} more {kind} inside every tolerance"


@dataclass
class LessonProgress:
    lesson: Lesson
    requirements: list[RequirementProgress]
    completion: LessonCompletion | None
    confirmed_by: Person | None = None

    @property
    def attempts_met(self) -> bool:
        return all(r.met for r in self.requirements)

    @property
    def confirmed(self) -> bool:
        return self.completion is not None


@dataclass
class StageProgress:
    stage: Stage
    lessons: list[LessonProgress]
    check: StageCheck | None
    checked_by: Person | None = None

    @property
    def lessons_confirmed(self) -> bool:
        return all(lesson.confirmed for lesson in self.lessons)

    @property
    def passed(self) -> bool:
        return self.check is not None and self.check.passed


@dataclass
class ProgramProgress:
    enrolment: Enrolment
    program: Program
    stages: list[StageProgress] = field(default_factory=list)

    @property
    def current_stage(self) -> StageProgress | None:
        return next((s for s in self.stages if not s.passed), None)

    @property
    def current_lesson(self) -> LessonProgress | None:
        stage = self.current_stage
        return next((lesson for lesson in stage.lessons if not lesson.confirmed), None) if stage else None

    @property
    def position_lesson(self) -> LessonProgress | None:
        """Where the student works now: the first lesson of the current stage that the records do not yet meet."""
        stage = self.current_stage
        return next((lesson for lesson in stage.lessons if not (lesson.confirmed or lesson.attempts_met)),
                    None) if stage else None

    @property
    def awaiting_confirmation(self) -> list[LessonProgress]:
        """Lessons of the current stage the records meet that no instructor has confirmed yet."""
        stage = self.current_stage
        return [lesson for lesson in stage.lessons if lesson.attempts_met and not lesson.confirmed] if stage else []


def _standard_family(session: Session, standard_id: int) -> set[int]:
    """A standard and every later version that supersedes it."""
    family, frontier = {standard_id}, {standard_id}
    while frontier:
        frontier = set(session.scalars(select(Standard.id).where(Standard.supersedes_id.in_(frontier)))) - family
        family |= frontier
    return family


def inside_counts(points: Sequence[AttemptPoint], since: date) -> Counter:
    """Counted attempts inside every tolerance since a date, by maneuver, termination and standard."""
    return Counter((p.maneuver, p.termination, p.standard_id) for p in points
                   if p.within_tolerances and p.flown_on >= since)


def count_for(session: Session, requirement: LessonRequirement, counts: Counter) -> int:
    """Attempts that meet a requirement: its kind, and its standard (or a later version) when it names one."""
    family = _standard_family(session, requirement.standard_id) if requirement.standard_id else None
    return sum(n for (maneuver, termination, standard_id), n in counts.items()
               if maneuver == requirement.maneuver and termination == requirement.termination
               and (family is None or standard_id in family))


def program_progress(session: Session, *, enrolment: Enrolment,
                     points: Sequence[AttemptPoint] | None = None) -> ProgramProgress:
    """Where the student stands: each requirement counted from the records, each sign-off and check."""
    if points is None:
        points = read_points(session, pilot_id=enrolment.student_id)
    program = session.get(Program, enrolment.program_id)
    completions = {c.lesson_id: c for c in session.scalars(
        select(LessonCompletion).where(LessonCompletion.enrolment_id == enrolment.id))}
    checks: dict[int, StageCheck] = {}
    for check in session.scalars(select(StageCheck).where(StageCheck.enrolment_id == enrolment.id)
                                 .order_by(StageCheck.signed_at, StageCheck.id)):
        checks[check.stage_id] = check  # the latest check of a stage stands
    counts = inside_counts(points, enrolment.started_on)
    result = ProgramProgress(enrolment=enrolment, program=program)
    for stage in program.stages:
        lessons = []
        for lesson in stage.lessons:
            completion = completions.get(lesson.id)
            lessons.append(LessonProgress(
                lesson=lesson, completion=completion,
                confirmed_by=session.get(Person, completion.confirmed_by_id) if completion else None,
                requirements=[RequirementProgress(r, count_for(session, r, counts))
                              for r in lesson.requirements],
            ))
        check = checks.get(stage.id)
        result.stages.append(StageProgress(stage=stage, lessons=lessons, check=check,
                                           checked_by=session.get(Person, check.checker_id) if check else None))
    return result


# ---- sign-offs ---------------------------------------------------------------------------------

def _lesson_of(program: Program, lesson_id: int) -> tuple[Stage, Lesson]:
    for stage in program.stages:
        for lesson in stage.lessons:
            if lesson.id == lesson_id:
                return stage, lesson
    raise NotFound("That lesson is not part of this student's program.")


def confirm_lesson(session: Session, *, actor: Person, enrolment: Enrolment, lesson_id: int) -> LessonCompletion:
    """An instructor confirms a lesson whose requirements the counted attempts meet."""
    if not actor.has_role("instructor", "chief_pilot") or actor.id == enrolment.student_id:
        raise Forbidden("Only the student's instructors or a chief pilot can confirm a lesson.")
    if not access.can_view_pilot(session, viewer=actor, pilot_id=enrolment.student_id):
        raise NotFound("No such enrolment.")
    progress = program_progress(session, enrolment=enrolment)
    lesson_progress = next((lp for s in progress.stages for lp in s.lessons if lp.lesson.id == lesson_id), None)
    if lesson_progress is None:
        raise NotFound("That lesson is not part of this student's program.")
    if lesson_progress.confirmed:
        raise Conflict(f"Lesson “{lesson_progress.lesson.name}” is confirmed already.")
    if not lesson_progress.attempts_met:
        missing = "; ".join(r.words for r in lesson_progress.requirements if not r.met)
        raise Conflict(f"Lesson “{lesson_progress.lesson.name}” is not met by the signed records yet: {missing}.")
    completion = LessonCompletion(enrolment_id=enrolment.id, lesson_id=lesson_id, confirmed_by_id=actor.id)
    session.add(completion)
    session.flush()
    audit.append(session, actor_id=actor.id, action="confirm_lesson", entity="enrolment", entity_id=enrolment.id,
                 after={"lesson_id": lesson_id})
    return completion


def may_check(actor: Person, enrolment: Enrolment) -> bool:
    """A chief pilot, or the check instructor assigned to the enrolment (never the student themselves)."""
    if actor.id == enrolment.student_id:
        return False
    return actor.has_role("chief_pilot") or (actor.has_role("instructor")
                                             and actor.id == enrolment.check_instructor_id)


def sign_stage_check(session: Session, *, actor: Person, enrolment: Enrolment, stage_id: int, passed: bool,
                     remarks: str, password: str) -> StageCheck:
    """Record a stage check, signed by re-entering the checker's password."""
    if not may_check(actor, enrolment):
        usual = session.get(Person, enrolment.instructor_id) if enrolment.instructor_id else None
        if usual is not None and actor.id == usual.id:
            raise Forbidden("You are this student's usual instructor: a stage check is signed by a chief pilot "
                            "or by the check instructor a chief pilot assigned.")
        raise Forbidden("A stage check is signed by a chief pilot or by the check instructor a chief pilot "
                        "assigned to this student's enrolment.")
    program = session.get(Program, enrolment.program_id)
    stage = next((s for s in program.stages if s.id == stage_id), None)
    if stage is None:
        raise NotFound("That stage is not part of this student's program.")
    try:  # the checker's own password, throttled with the sign-ins; a reset one is refused
        people.check_signing_password(session, person=actor, password=password)
    except Invalid as refusal:
        audit.append(session, actor_id=actor.id, action="sign_refused", entity="enrolment", entity_id=enrolment.id,
                     reason="wrong password")
        raise Invalid(refusal.message + " The stage check was not signed.", keep_record=True) from None
    if passed:
        progress = program_progress(session, enrolment=enrolment)
        stage_progress = next(s for s in progress.stages if s.stage.id == stage_id)
        open_lessons = [lp.lesson.name for lp in stage_progress.lessons if not lp.confirmed]
        if open_lessons:
            raise Conflict("Every lesson of the stage is confirmed before a pass is signed; still open: "
                           + ", ".join(f"“{name}”" for name in open_lessons) + ".")
    check = StageCheck(enrolment_id=enrolment.id, stage_id=stage_id, checker_id=actor.id, passed=passed,
                       remarks=remarks.strip())
    session.add(check)
    session.flush()
    audit.append(session, actor_id=actor.id, action="stage_check", entity="enrolment", entity_id=enrolment.id,
                 after={"stage_id": stage_id, "passed": passed, "remarks": check.remarks})
    return check
