"""JSON API: instructor standardisation and the attempts behind each figure (chief pilots, admins)."""
from datetime import date

from fastapi import APIRouter, Query

from server.compute.standardisation import outcome
from server.deps import DbSession
from server.people.deps import ApiUser, require_role
from server.standardisation import service
from server.standardisation.schemas import (
    AttemptBehindRead,
    AttemptsBehindRead,
    InstructorRowRead,
    ManeuverOrAny,
    Scope,
    Show,
    StandardisationRead,
    TallyRead,
    TerminationOrAny,
)
from server.web import CAUTION

router = APIRouter(tags=["standardisation"])
READERS = ("chief_pilot", "admin")


def report_read(result: service.Report) -> StandardisationRead:
    rows = [
        InstructorRowRead(
            instructor_id=f.instructor_id, name=f.name, **TallyRead.of(f.all).model_dump(),
            shared=TallyRead.of(f.shared), peers_shared=TallyRead.of(f.peers_shared),
            shared_cells=[{"maneuver": m, "termination": t, "level": lv} for m, t, lv in f.shared_cells],
        )
        for f in result.rows
    ]
    return StandardisationRead(date_from=result.date_from, date_to=result.date_to, maneuver=result.maneuver,
                               termination=result.termination, school=TallyRead.of(result.school), rows=rows,
                               caution=CAUTION)


@router.get("/standardisation", response_model=StandardisationRead, name="standardisation_api")
def standardisation(db: DbSession, person: ApiUser, date_from: date | None = Query(default=None, alias="from"),
                    date_to: date | None = Query(default=None, alias="to"), maneuver: ManeuverOrAny = None,
                    termination: TerminationOrAny = None):
    """Each instructor's grades against the computed outcomes of signed attempts, beside the school's."""
    require_role(person, *READERS)
    return report_read(service.report(db, date_from=date_from, date_to=date_to, maneuver=maneuver or None,
                                      termination=termination or None))


@router.get("/standardisation/attempts", response_model=AttemptsBehindRead, name="standardisation_attempts_api")
def attempts_behind(db: DbSession, person: ApiUser, instructor_id: int | None = None, show: Show = "attempts",
                    scope: Scope = "all", date_from: date | None = Query(default=None, alias="from"),
                    date_to: date | None = Query(default=None, alias="to"), maneuver: ManeuverOrAny = None,
                    termination: TerminationOrAny = None):
    """The signed attempts one figure of the report counts, newest first."""
    require_role(person, *READERS)
    items, truncated, _ = service.attempts_behind(
        db, instructor_id=instructor_id, show=show, scope=scope, date_from=date_from, date_to=date_to,
        maneuver=maneuver or None, termination=termination or None)
    return AttemptsBehindRead(truncated=truncated, attempts=[attempt_read(a) for a in items])


def attempt_read(attempt) -> AttemptBehindRead:
    sortie = attempt.sortie
    return AttemptBehindRead(
        attempt_id=attempt.id, sortie_id=sortie.id, flown_on=attempt.flown_on, pilot_id=sortie.pilot_id,
        pilot_name=sortie.pilot.name, instructor_id=sortie.instructor_id,
        instructor_name=sortie.instructor.name if sortie.instructor else None, maneuver=attempt.maneuver,
        termination=attempt.termination, grade=attempt.grade, score=attempt.score,
        within_tolerances=attempt.within_tolerances, takeover=attempt.takeover,
        outcome=outcome(service.graded_of(attempt)),
    )
