"""Standards and which one applies to an attempt."""
from sqlalchemy import bindparam, select
from sqlalchemy.orm import Session

from server.training.models import Enrolment, Program, Standard

# Built once: logging an attempt asks both on every request, and building a statement costs about as
# much as running it.
_LEVEL = (select(Program.level).join(Enrolment, Enrolment.program_id == Program.id)
          .where(Enrolment.student_id == bindparam("pilot_id"), Enrolment.active.is_(True))
          .order_by(Enrolment.started_on.desc()).limit(1))
_STANDARDS = select(Standard).where(
    Standard.active.is_(True), Standard.level == bindparam("level"),
    (Standard.maneuver == bindparam("maneuver")) | Standard.maneuver.is_(None))


def level_of(session: Session, *, pilot_id: int) -> str | None:
    """The program level of the pilot's active enrolment, if any."""
    return session.scalar(_LEVEL, {"pilot_id": pilot_id})


def standard_for(session: Session, *, pilot_id: int, maneuver: str) -> Standard | None:
    """The active standard for this maneuver at the pilot's level; one for every maneuver if none."""
    level = level_of(session, pilot_id=pilot_id) or "recurrent"
    candidates = session.scalars(_STANDARDS, {"level": level, "maneuver": maneuver}).all()
    exact = [s for s in candidates if s.maneuver == maneuver]
    return (exact or candidates or [None])[0]
