"""JSON API: the safety digest and the attempts behind its counts (chief pilots)."""
from datetime import date

from fastapi import APIRouter, Query

from server.deps import DbSession
from server.people.deps import ApiUser, require_role
from server.safety import service as safety
from server.safety.schemas import (
    DigestRead,
    DigestRowRead,
    Dimension,
    Category,
    FlaggedAttemptRead,
    FlaggedAttemptsRead,
)
from server.web import CAUTION

router = APIRouter(tags=["safety"])


def row_read(row: safety.DigestRow) -> DigestRowRead:
    codes = safety.CATEGORIES
    return DigestRowRead(key=row.key, label=row.label, attempts=row.attempts,
                         counts={c: row.counts.get(c, 0) for c in codes}, per_100={c: row.per_100(c) for c in codes})


def flagged_read(item: safety.FlaggedAttempt) -> FlaggedAttemptRead:
    a, s = item.attempt, item.sortie
    return FlaggedAttemptRead(
        attempt_id=a.id, sortie_id=s.id, sequence=a.sequence, flown_on=a.flown_on, pilot_id=s.pilot_id,
        pilot_name=s.pilot.name, instructor_id=s.instructor_id,
        instructor_name=s.instructor.name if s.instructor else None,
        aircraft_registration=s.aircraft.registration, site_name=s.site.name,
        density_altitude_ft=s.density_altitude_ft, maneuver=a.maneuver, termination=a.termination, score=a.score,
        flags=a.flags,
    )


@router.get("/safety/digest", response_model=DigestRead)
def digest(db: DbSession, person: ApiUser, date_from: date | None = None, date_to: date | None = None):
    """Flags per 100 signed attempts by instructor, aircraft, site, density-altitude band and month."""
    require_role(person, "chief_pilot")
    result = safety.digest(db, date_from=date_from, date_to=date_to)
    return DigestRead(date_from=result.date_from, date_to=result.date_to, flag_labels=safety.FLAG_LABELS,
                      total=row_read(result.total),
                      by={name: [row_read(r) for r in rows] for name, rows in result.by.items()}, caution=CAUTION)


@router.get("/safety/attempts", response_model=FlaggedAttemptsRead)
def flagged_attempts(db: DbSession, person: ApiUser, by: Dimension | None = None,
                     key: str | None = Query(default=None, max_length=20), flag: Category | None = None,
                     date_from: date | None = None, date_to: date | None = None):
    """The flagged signed attempts behind one count of the digest."""
    require_role(person, "chief_pilot")
    items, truncated = safety.flagged_attempts(db, by=by, key=key, flag=flag, date_from=date_from, date_to=date_to)
    return FlaggedAttemptsRead(attempts=[flagged_read(i) for i in items], truncated=truncated)
