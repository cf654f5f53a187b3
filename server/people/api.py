"""JSON API: the caller and the people of the school."""
from fastapi import APIRouter

from server.deps import DbSession
from server.people import service as people
from server.people.deps import ApiUser, SetupApiUser
from server.people.models import Person
from server.people.schemas import MeRead, PersonCreate, PersonRead, PersonUpdate

router = APIRouter(tags=["people"])


def person_read(person: Person) -> PersonRead:
    return PersonRead(id=person.id, name=person.name, email=person.email, roles=person.roles, active=person.active)


@router.get("/me", response_model=MeRead)
def me(person: ApiUser):
    return MeRead(id=person.id, name=person.name, roles=person.roles)


@router.post("/people", response_model=PersonRead, status_code=201)
def create_person(data: PersonCreate, db: DbSession, person: SetupApiUser):
    created = people.create_person(db, name=data.name, email=data.email, roles=list(data.roles),
                                   password=data.password, actor=person)
    return person_read(created)


@router.patch("/people/{person_id}", response_model=PersonRead)
def update_person(person_id: int, data: PersonUpdate, db: DbSession, person: SetupApiUser):
    target = people.get_person(db, person_id)
    people.update_person(db, person=target, actor=person, **data.model_dump(exclude_unset=True))
    return person_read(target)
