"""JSON API: the caller and the people of the school."""
from fastapi import APIRouter

from server.deps import ApiUser, DbSession, require_role
from server.errors import NotFound
from server.people import service as people
from server.people.models import Person
from server.people.schemas import MeRead, PersonCreate, PersonRead, PersonUpdate

router = APIRouter(tags=["people"])


def person_read(person: Person) -> PersonRead:
    return PersonRead(id=person.id, name=person.name, email=person.email, roles=person.roles, active=person.active)


@router.get("/me", response_model=MeRead)
def me(person: ApiUser):
    return MeRead(id=person.id, name=person.name, roles=person.roles)


@router.get("/people", response_model=list[PersonRead])
def list_people(db: DbSession, person: ApiUser):
    return [person_read(p) for p in people.visible_people(db, viewer=person)]


@router.post("/people", response_model=PersonRead, status_code=201)
def create_person(data: PersonCreate, db: DbSession, person: ApiUser):
    require_role(person, "chief_pilot", "admin")
    created = people.create_person(db, name=data.name, email=data.email, roles=list(data.roles),
                                   password=data.password, actor_id=person.id)
    return person_read(created)


@router.get("/people/{person_id}", response_model=PersonRead)
def get_person(person_id: int, db: DbSession, person: ApiUser):
    if not people.can_view_pilot(db, viewer=person, pilot_id=person_id):
        raise NotFound("No such person.")
    return person_read(people.get_person(db, person_id))


@router.patch("/people/{person_id}", response_model=PersonRead)
def update_person(person_id: int, data: PersonUpdate, db: DbSession, person: ApiUser):
    require_role(person, "chief_pilot", "admin")
    target = people.get_person(db, person_id)
    people.update_person(db, person=target, actor_id=person.id, **data.model_dump(exclude_unset=True))
    return person_read(target)
