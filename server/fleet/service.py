"""Helicopter types, aircraft and sites."""
from pydantic import ValidationError
from sqlalchemy import select
from sqlalchemy.orm import Session

from server.compute.hv import in_avoid_region
from server.errors import Conflict, Invalid, NotFound
from server.fleet import hooks
from server.fleet.hvchart import Entry
from server.fleet.models import Aircraft, HelicopterType, Site
from server.fleet.schemas import AircraftCreate, SiteCreate, TypeCreate, TypeUpdate
from server.people.models import Person
from server.records import audit

AUDIT_ENTITY = {Aircraft: "aircraft", Site: "site"}  # what the audit chain calls each kind of row


def list_types(session: Session) -> list[HelicopterType]:
    return list(session.scalars(select(HelicopterType).order_by(HelicopterType.designation)))


def get_type(session: Session, type_id: int) -> HelicopterType:
    row = session.get(HelicopterType, type_id)
    if row is None:
        raise NotFound("No such helicopter type.")
    return row


def type_fields(data: TypeCreate) -> dict:
    fields = data.model_dump(exclude={"flare_band_ft"})
    fields["flare_band_low_ft"], fields["flare_band_high_ft"] = data.flare_band_ft
    fields["hv_avoid"] = [[list(p) for p in polygon] for polygon in data.hv_avoid]
    return fields


def create_type(session: Session, *, data: TypeCreate, actor: Person) -> HelicopterType:
    if session.scalar(select(HelicopterType.id).where(HelicopterType.designation == data.designation)):
        raise Conflict(f"A helicopter type called {data.designation} exists already.")
    row = HelicopterType(**type_fields(data))
    session.add(row)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="helicopter_type",
                 entity_id=row.id, after=data.model_dump(mode="json"))
    return row


def update_type(session: Session, *, row: HelicopterType, data: TypeCreate, actor: Person) -> HelicopterType:
    clash = session.scalar(select(HelicopterType.id).where(HelicopterType.designation == data.designation,
                                                           HelicopterType.id != row.id))
    if clash:
        raise Conflict(f"A helicopter type called {data.designation} exists already.")
    before = type_read(row)
    for key, value in type_fields(data).items():
        setattr(row, key, value)
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="helicopter_type", entity_id=row.id,
                 before=before, after=type_read(row))
    return row


def change_type(session: Session, *, row: HelicopterType, changes: TypeUpdate, actor: Person) -> HelicopterType:
    """Apply the fields sent to a type; a field sent as null clears it only where it is optional."""
    merged = {key: value for key, value in type_read(row).items() if key != "id"}
    merged |= changes.model_dump(exclude_unset=True)
    try:
        data = TypeCreate.model_validate(merged)
    except ValidationError as error:
        raise Invalid("; ".join(f"{'.'.join(map(str, e['loc'])) or 'type'}: {e['msg'].removeprefix('Value error, ')}"
                                for e in error.errors())) from None
    return update_type(session, row=row, data=data, actor=actor)


def hv_entries(*, helicopter: HelicopterType, attempts) -> list[Entry]:
    """Attempts with a recorded entry point, each marked inside or outside the type's avoid regions."""
    polygons = [[tuple(p) for p in polygon] for polygon in helicopter.hv_avoid or []]
    return [
        Entry(sequence=a.sequence, kias=a.entry_kias, height_ft=a.entry_height_ft,
              inside=in_avoid_region(a.entry_kias, a.entry_height_ft, polygons))
        for a in attempts if a.entry_kias is not None and a.entry_height_ft is not None
    ]


def type_read(row: HelicopterType) -> dict:
    return {
        "id": row.id, "designation": row.designation, "rotor_radius_ft": row.rotor_radius_ft,
        "blade_count": row.blade_count, "rotor_inertia_slug_ft2": row.rotor_inertia_slug_ft2,
        "normal_rotor_rpm": row.normal_rotor_rpm, "nr_power_off_min_pct": row.nr_power_off_min_pct,
        "nr_power_off_max_pct": row.nr_power_off_max_pct, "autorotation_kias": row.autorotation_kias,
        "reference_weight_lb": row.reference_weight_lb,
        "flare_band_ft": [row.flare_band_low_ft, row.flare_band_high_ft],
        "touchdown_speed_max_kt": row.touchdown_speed_max_kt, "hv_avoid": row.hv_avoid,
    }


def list_aircraft(session: Session) -> list[Aircraft]:
    return list(session.scalars(select(Aircraft).order_by(Aircraft.registration)))


def get_aircraft(session: Session, aircraft_id: int) -> Aircraft:
    row = session.get(Aircraft, aircraft_id)
    if row is None:
        raise NotFound("No such aircraft.")
    return row


def create_aircraft(session: Session, *, data: AircraftCreate, actor: Person) -> Aircraft:
    registration = data.registration.strip().upper()
    if session.get(HelicopterType, data.type_id) is None:
        raise Invalid("type_id does not name a helicopter type.")
    if session.scalar(select(Aircraft.id).where(Aircraft.registration == registration)):
        raise Conflict(f"Aircraft {registration} exists already.")
    row = Aircraft(registration=registration, type_id=data.type_id)
    session.add(row)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="aircraft", entity_id=row.id,
                 after={"registration": registration, "type_id": data.type_id})
    return row


def aircraft_read(row: Aircraft) -> dict:
    return {"id": row.id, "registration": row.registration, "type_id": row.type_id,
            "type_designation": row.type.designation, "active": row.active}


def list_sites(session: Session) -> list[Site]:
    return list(session.scalars(select(Site).order_by(Site.name)))


def get_site(session: Session, site_id: int) -> Site:
    row = session.get(Site, site_id)
    if row is None:
        raise NotFound("No such site.")
    return row


def create_site(session: Session, *, data: SiteCreate, actor: Person) -> Site:
    if session.scalar(select(Site.id).where(Site.name == data.name)):
        raise Conflict(f"A site called {data.name} exists already.")
    row = Site(**data.model_dump())
    session.add(row)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="site", entity_id=row.id,
                 after=data.model_dump())
    return row


def update_aircraft(session: Session, *, row: Aircraft, data: AircraftCreate, actor: Person) -> Aircraft:
    """Change an aircraft's registration or type; records flown in it keep pointing at the same row."""
    registration = data.registration.strip().upper()
    if session.get(HelicopterType, data.type_id) is None:
        raise Invalid("type_id does not name a helicopter type.")
    if session.scalar(select(Aircraft.id).where(Aircraft.registration == registration, Aircraft.id != row.id)):
        raise Conflict(f"Aircraft {registration} exists already.")
    before = {"registration": row.registration, "type_id": row.type_id}
    row.registration, row.type_id = registration, data.type_id
    session.flush()
    session.refresh(row)  # the joined type follows the new type_id
    audit.append(session, actor_id=actor.id, action="edit", entity="aircraft", entity_id=row.id,
                 before=before, after={"registration": registration, "type_id": data.type_id})
    if before["type_id"] != data.type_id:
        hooks.aircraft_retyped(session, row)
    return row


def site_read(row: Site) -> dict:
    """A site's fields as the API's SiteCreate names them, plus its id and whether it is in use."""
    return {"id": row.id, "active": row.active,
            **{name: getattr(row, name) for name in SiteCreate.model_fields if hasattr(row, name)}}


def update_site(session: Session, *, row: Site, data: SiteCreate, actor: Person) -> Site:
    """Change a site's name, elevation, landing directions (and aim point, where the model has one)."""
    if session.scalar(select(Site.id).where(Site.name == data.name, Site.id != row.id)):
        raise Conflict(f"A site called {data.name} exists already.")
    before = site_read(row)
    for key, value in data.model_dump().items():
        setattr(row, key, value)
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="site", entity_id=row.id,
                 before=before, after=site_read(row))
    return row


def set_active(session: Session, *, row: Aircraft | Site, active: bool, actor: Person) -> Aircraft | Site:
    """Take an aircraft or a site out of use (or back): new sorties no longer offer it; its records stay."""
    if row.active != active:
        row.active = active
        session.flush()
        audit.append(session, actor_id=actor.id, action="edit", entity=AUDIT_ENTITY[type(row)], entity_id=row.id,
                     before={"active": not active}, after={"active": active})
    return row
