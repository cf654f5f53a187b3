"""Who may see whom: students see themselves, instructors the pilots they teach, chief pilots everyone.

"The pilots an instructor teaches" follow the school's assignments: an active enrolment with that
instructor as the usual instructor, or as the check instructor a chief pilot assigned to sign the
student's stage checks (who must see the records they check). A sortie flown together does not count (an instructor could
otherwise give themselves any pilot's records with an empty sortie); the sortie itself stays
visible to its assigned instructor (logbook.service.may_view), which is how a chief pilot's
assignment of one sortie works.
"""
from sqlalchemy import or_, select
from sqlalchemy.orm import Session

from server.people.models import Person
from server.training.models import Enrolment


def student_ids_of(session: Session, instructor_id: int) -> set[int]:
    """Pilots an instructor teaches or checks: actively enrolled with them as usual or check instructor."""
    assigned = or_(Enrolment.instructor_id == instructor_id, Enrolment.check_instructor_id == instructor_id)
    return set(session.scalars(select(Enrolment.student_id).where(assigned, Enrolment.active.is_(True))))


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
        query = query.where(Person.id.in_(ids))
    return list(session.scalars(query))
