"""JSON API: helicopter types, aircraft and sites."""
from fastapi import APIRouter

from server.deps import ApiUser, DbSession, require_role
from server.fleet import service as fleet
from server.records.idempotency import IdempotentCreate
from server.fleet.schemas import (
    AircraftCreate,
    AircraftRead,
    SiteCreate,
    SiteRead,
    TypeCreate,
    TypeRead,
    TypeUpdate,
)

router = APIRouter(tags=["fleet"])


@router.get("/types", response_model=list[TypeRead])
def list_types(db: DbSession, person: ApiUser):
    return [fleet.type_read(t) for t in fleet.list_types(db)]


@router.post("/types", response_model=TypeRead, status_code=201)
def create_type(data: TypeCreate, db: DbSession, person: ApiUser, once: IdempotentCreate):
    require_role(person, "chief_pilot", "admin")
    return once.run(lambda: fleet.type_read(fleet.create_type(db, data=data, actor_id=person.id)), status_code=201)


@router.get("/types/{type_id}", response_model=TypeRead)
def get_type(type_id: int, db: DbSession, person: ApiUser):
    return fleet.type_read(fleet.get_type(db, type_id))


@router.patch("/types/{type_id}", response_model=TypeRead)
def update_type(type_id: int, data: TypeUpdate, db: DbSession, person: ApiUser):
    """Change some fields of a helicopter type; attempts already scored keep their figures."""
    require_role(person, "chief_pilot", "admin")
    row = fleet.get_type(db, type_id)
    return fleet.type_read(fleet.change_type(db, row=row, changes=data, actor_id=person.id))


@router.get("/aircraft", response_model=list[AircraftRead])
def list_aircraft(db: DbSession, person: ApiUser):
    return [fleet.aircraft_read(a) for a in fleet.list_aircraft(db)]


@router.post("/aircraft", response_model=AircraftRead, status_code=201)
def create_aircraft(data: AircraftCreate, db: DbSession, person: ApiUser, once: IdempotentCreate):
    require_role(person, "chief_pilot", "admin")
    return once.run(lambda: fleet.aircraft_read(fleet.create_aircraft(db, data=data, actor_id=person.id)),
                    status_code=201)


@router.get("/sites", response_model=list[SiteRead])
def list_sites(db: DbSession, person: ApiUser):
    return [SiteRead.model_validate(s, from_attributes=True) for s in fleet.list_sites(db)]


@router.post("/sites", response_model=SiteRead, status_code=201)
def create_site(data: SiteCreate, db: DbSession, person: ApiUser, once: IdempotentCreate):
    require_role(person, "chief_pilot", "admin")
    return once.run(lambda: SiteRead.model_validate(fleet.create_site(db, data=data, actor_id=person.id),
                                                    from_attributes=True), status_code=201)
