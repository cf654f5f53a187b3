"""Who may see whom: students see themselves, instructors the pilots they teach, chief pilots everyone.

It lives beside the sorties because "the pilots an instructor teaches" are read from enrolments and flown sorties.
"""
from sqlalchemy import or_, select
from sqlalchemy.orm import Session

from server.logbook.models import Sortie
from server.people.models import Person, PersonRole
from server.training.models import Enrolment


def student_ids_of(session: Session, instructor_id: int) -> set[int]:
    """Pilots an instructor teaches: enrolled with them, or flown with them."""
    enrolled = session.scalars(select(Enrolment.student_id).where(Enrolment.instructor_id == instructor_id))
    flown = session.scalars(select(Sortie.pilot_id).where(Sortie.instructor_id == instructor_id).distinct())
    return set(enrolled) | set(flown)


def can_view_pilot(session: Session, *, viewer: Person, pilot_id: int) -> bool:
    """Students see themselves, instructors their students, chief pilots and admins everyone."""
    if viewer.sees_everyone or viewer.id == pilot_id:
        return True
    if viewer.has_role("instructor"):
        return pilot_id in student_ids_of(session, viewer.id)
    return False


def visible_people(session: Session, *, viewer: Person) -> list[Person]:
    query = select(Person).order_by(Person.name)
    if not viewer.sees_everyone:
        ids = {viewer.id}
        if viewer.has_role("instructor"):
            ids |= student_ids_of(session, viewer.id)
            # Instructors also need to pick any student when starting a sortie.
            query = query.where(or_(Person.id.in_(ids), Person.role_rows.any(PersonRole.role == "student")))
        else:
            query = query.where(Person.id.in_(ids))
    return list(session.scalars(query))
