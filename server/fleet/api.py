"""JSON API: helicopter types, aircraft and sites."""
from fastapi import APIRouter

from server.deps import DbSession
from server.fleet import service as fleet
from server.fleet.schemas import (
    AircraftCreate,
    AircraftRead,
    SiteCreate,
    SiteRead,
    TypeCreate,
    TypeRead,
    TypeUpdate,
)
from server.people.deps import ApiUser, IdempotentCreate, SetupApiUser

router = APIRouter(tags=["fleet"])


@router.get("/types", response_model=list[TypeRead])
def list_types(db: DbSession, person: ApiUser):
    return [fleet.type_read(t) for t in fleet.list_types(db)]


@router.post("/types", response_model=TypeRead, status_code=201)
def create_type(data: TypeCreate, db: DbSession, person: SetupApiUser, once: IdempotentCreate):
    return once.run(lambda: fleet.type_read(fleet.create_type(db, data=data, actor=person)), status_code=201)


@router.get("/types/{type_id}", response_model=TypeRead)
def get_type(type_id: int, db: DbSession, person: ApiUser):
    return fleet.type_read(fleet.get_type(db, type_id))


@router.patch("/types/{type_id}", response_model=TypeRead)
def update_type(type_id: int, data: TypeUpdate, db: DbSession, person: SetupApiUser):
    """Change some fields of a helicopter type; attempts already scored keep their figures."""
    row = fleet.get_type(db, type_id)
    return fleet.type_read(fleet.change_type(db, row=row, changes=data, actor=person))


@router.get("/aircraft", response_model=list[AircraftRead])
def list_aircraft(db: DbSession, person: ApiUser):
    return [fleet.aircraft_read(a) for a in fleet.list_aircraft(db)]


@router.post("/aircraft", response_model=AircraftRead, status_code=201)
def create_aircraft(data: AircraftCreate, db: DbSession, person: SetupApiUser, once: IdempotentCreate):
    return once.run(lambda: fleet.aircraft_read(fleet.create_aircraft(db, data=data, actor=person)),
                    status_code=201)


@router.get("/sites", response_model=list[SiteRead])
def list_sites(db: DbSession, person: ApiUser):
    return [SiteRead.model_validate(s, from_attributes=True) for s in fleet.list_sites(db)]


@router.post("/sites", response_model=SiteRead, status_code=201)
def create_site(data: SiteCreate, db: DbSession, person: SetupApiUser, once: IdempotentCreate):
    return once.run(lambda: SiteRead.model_validate(fleet.create_site(db, data=data, actor=person),
                                                    from_attributes=True), status_code=201)
