"""JSON API: standards (tolerances and weights per maneuver and level)."""
from fastapi import APIRouter

from server.deps import DbSession
from server.people.deps import ApiUser, SetupApiUser
from server.training import standards
from server.training.models import Standard
from server.training.standards_schemas import StandardCreate, StandardRead, StandardUpdate

router = APIRouter(tags=["training"])


def standard_read(db, row: Standard) -> StandardRead:
    newer = standards.superseded_by(db, row=row)
    return StandardRead(**standards.as_data(row), id=row.id, active=row.active, supersedes_id=row.supersedes_id,
                        superseded_by_id=newer.id if newer else None, created_at=row.created_at)


@router.get("/standards", response_model=list[StandardRead])
def list_standards(db: DbSession, person: ApiUser, include_retired: bool = False):
    """The standards in force; with include_retired, every earlier version too."""
    return [standard_read(db, s) for s in standards.list_standards(db, include_retired=include_retired)]


@router.post("/standards", response_model=StandardRead, status_code=201)
def create_standard(data: StandardCreate, db: DbSession, person: SetupApiUser):
    return standard_read(db, standards.create_standard(db, data=data, actor=person))


@router.get("/standards/{standard_id}", response_model=StandardRead)
def get_standard(standard_id: int, db: DbSession, person: ApiUser):
    return standard_read(db, standards.get_standard(db, standard_id=standard_id))


@router.patch("/standards/{standard_id}", response_model=StandardRead)
def update_standard(standard_id: int, data: StandardUpdate, db: DbSession, person: SetupApiUser):
    """Change a standard: the answer is the new version; the old one is retired, never rewritten."""
    row = standards.get_standard(db, standard_id=standard_id)
    new = standards.supersede_standard(db, row=row, data=standards.merged(row=row, changes=data), actor=person)
    return standard_read(db, new)
