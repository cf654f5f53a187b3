"""Standards as data: list, create, and edit by superseding, so scored attempts keep theirs."""
from pydantic import ValidationError
from sqlalchemy import select
from sqlalchemy.orm import Session

from server.compute.scoring import DEFAULT_WEIGHTS
from server.errors import Conflict, Invalid, NotFound
from server.people.models import Person
from server.records import audit
from server.training.models import Program, Standard
from server.training.standards_schemas import StandardCreate, StandardUpdate

FIELDS = tuple(StandardCreate.model_fields)


def defaults() -> dict:
    """What a new standard starts from: the design's starting values (a school changes them)."""
    return {name: field.get_default(call_default_factory=True)
            for name, field in StandardCreate.model_fields.items() if not field.is_required()}


def list_standards(session: Session, *, include_retired: bool = False) -> list[Standard]:
    """Standards by level and maneuver (every-maneuver standards first), newest version first."""
    query = select(Standard).order_by(Standard.level, Standard.maneuver.is_not(None), Standard.maneuver,
                                      Standard.id.desc())
    if not include_retired:
        query = query.where(Standard.active.is_(True))
    return list(session.scalars(query))


def get_standard(session: Session, *, standard_id: int) -> Standard:
    row = session.get(Standard, standard_id)
    if row is None:
        raise NotFound("No such standard.")
    return row


def superseded_by(session: Session, *, row: Standard) -> Standard | None:
    return session.scalar(select(Standard).where(Standard.supersedes_id == row.id))


def history(session: Session, *, row: Standard) -> list[Standard]:
    """Every version of this standard, newest first."""
    chain = [row]
    while chain[-1].supersedes_id is not None:
        chain.append(session.get(Standard, chain[-1].supersedes_id))
    while (newer := superseded_by(session, row=chain[0])) is not None:
        chain.insert(0, newer)
    return chain


def as_data(row: Standard) -> dict:
    """The standard's own fields, as the API and the audit chain show them."""
    data = {name: getattr(row, name) for name in FIELDS}
    data["weights"] = DEFAULT_WEIGHTS | (row.weights or {})  # an empty set means the default weights
    return data


def _require_unique(session: Session, *, data: StandardCreate, ignore_id: int | None = None) -> None:
    """One active standard per level and maneuver, so which one applies is never a guess."""
    clash = session.scalar(select(Standard).where(
        Standard.active.is_(True), Standard.level == data.level, Standard.id != (ignore_id or 0),
        Standard.maneuver.is_(None) if data.maneuver is None else Standard.maneuver == data.maneuver,
    ))
    if clash is not None:
        raise Conflict(f"“{clash.name}” already applies to {data.maneuver or 'every maneuver'} at level "
                       f"{data.level}; edit that standard instead.")


def create_standard(session: Session, *, data: StandardCreate, actor: Person) -> Standard:
    """Add a standard for a level and maneuver that has none yet."""
    _require_unique(session, data=data)
    row = Standard(**data.model_dump(), active=True)
    session.add(row)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="standard", entity_id=row.id,
                 after=as_data(row))
    return row


def merged(*, row: Standard, changes: StandardUpdate) -> StandardCreate:
    """The standard with the fields sent changed, checked in full."""
    values = as_data(row) | changes.model_dump(exclude_unset=True)
    try:
        return StandardCreate.model_validate(values)
    except ValidationError as error:
        raise Invalid("; ".join(
            f"{'.'.join(map(str, e['loc'])) or 'standard'}: {e['msg'].removeprefix('Value error, ')}"
            for e in error.errors())) from None


def supersede_standard(session: Session, *, row: Standard, data: StandardCreate, actor: Person) -> Standard:
    """An edit: a new row that supersedes this one, which retires; attempts keep the one they used."""
    if not row.active or superseded_by(session, row=row) is not None:
        raise Conflict("This version of the standard has been replaced; edit the current version.")
    if data.model_dump() == as_data(row):
        return row
    _require_unique(session, data=data, ignore_id=row.id)
    row.active = False
    new = Standard(**data.model_dump(), active=True, supersedes_id=row.id)
    session.add(new)
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="standard", entity_id=new.id,
                 before={"id": row.id, **as_data(row)}, after=as_data(new))
    return new


def known_levels(session: Session) -> list[str]:
    """Levels in use by programs and standards, offered when a standard is written."""
    levels = set(session.scalars(select(Program.level))) | set(session.scalars(select(Standard.level)))
    return sorted(levels | {"private", "recurrent"})
