"""JSON API: the people a caller may see (who may see whom is the logbook's rule, `server.logbook.access`)."""
from fastapi import APIRouter

from server.deps import DbSession
from server.errors import NotFound
from server.logbook import access
from server.people import service as people
from server.people.api import person_read
from server.people.deps import ApiUser
from server.people.schemas import PersonRead

router = APIRouter(tags=["people"])


@router.get("/people", response_model=list[PersonRead])
def list_people(db: DbSession, person: ApiUser):
    return [person_read(p) for p in access.visible_people(db, viewer=person)]


@router.get("/people/{person_id}", response_model=PersonRead)
def get_person(person_id: int, db: DbSession, person: ApiUser):
    if not access.can_view_pilot(db, viewer=person, pilot_id=person_id):
        raise NotFound("No such person.")
    return person_read(people.get_person(db, person_id))
