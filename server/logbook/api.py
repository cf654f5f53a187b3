"""JSON API: conditions, sorties and attempts."""
from fastapi import APIRouter, Query, Response

from pydantic import ValidationError

from server.compute.atmosphere import hpa_to_inhg
from server.deps import DbSession
from server.errors import Invalid
from server.logbook import derive
from server.logbook import service as logbook
from server.logbook.models import Attempt, Sortie
from server.logbook.schemas import (
    KG_PER_LB,
    AmendRequest,
    AttemptFields,
    AttemptRead,
    AttemptUpdate,
    ConditionsRead,
    ConditionsRequest,
    SignatureRead,
    SignRequest,
    SortieCreate,
    SortieRead,
    SortieUpdate,
)
from server.people.deps import ApiUser, IdempotentCreate

router = APIRouter(tags=["logbook"])
# Requests (method and path under /api/v1) that take the writer's turn late, in their service: logging an
# attempt reads, checks and scores before it (server/write_queue.py). Their routes are plain `def`.
LATE_TURN_ROUTES = (r"POST /api/v1/sorties/\d+/attempts",)


def attempt_read(attempt: Attempt) -> AttemptRead:
    fields = {name: getattr(attempt, name) for name in AttemptFields.model_fields}
    band = None
    if attempt.flare_band_low_ft is not None:
        band = (attempt.flare_band_low_ft, attempt.flare_band_high_ft)
    return AttemptRead(
        **fields, id=attempt.id, sortie_id=attempt.sortie_id, sequence=attempt.sequence, score=attempt.score,
        parts=attempt.parts, flags=attempt.flags, satisfactory=attempt.satisfactory,
        within_tolerances=attempt.within_tolerances, expected_flare_band_ft=band,
        headwind_kt=attempt.headwind_kt, crosswind_kt=attempt.crosswind_kt, standard_id=attempt.standard_id,
        measured=attempt.measured_fields, measured_uncertainty=attempt.measured_uncertainty,
    )


def sortie_read(db, sortie: Sortie) -> SortieRead:
    newer = logbook.superseded_by(db, sortie)
    return SortieRead(
        id=sortie.id, version=sortie.version, supersedes_id=sortie.supersedes_id,
        superseded_by_id=newer.id if newer else None, amendment_reason=sortie.amendment_reason,
        state=logbook.display_state(db, sortie), flown_at=sortie.flown_at, aircraft_id=sortie.aircraft_id,
        instructor_id=sortie.instructor_id, pilot_id=sortie.pilot_id, site_id=sortie.site_id,
        oat_c=sortie.oat_c, altimeter_hpa=sortie.altimeter_hpa,
        altimeter_inhg=round(hpa_to_inhg(sortie.altimeter_hpa), 2) if sortie.altimeter_hpa else None,
        wind_dir_deg=sortie.wind_dir_deg, wind_kt=sortie.wind_kt, gust_kt=sortie.gust_kt, metar=sortie.metar,
        takeoff_weight_lb=sortie.takeoff_weight_lb,
        takeoff_weight_kg=round(sortie.takeoff_weight_lb * KG_PER_LB, 1) if sortie.takeoff_weight_lb else None,
        remarks=sortie.remarks, pressure_altitude_ft=sortie.pressure_altitude_ft,
        density_altitude_ft=sortie.density_altitude_ft, density_ratio=sortie.density_ratio,
        attempts=[attempt_read(a) for a in sortie.attempts],
        signatures=[
            SignatureRead(signer_id=s.signer_id, signer_name=db.get(type(sortie.pilot), s.signer_id).name,
                          meaning=s.meaning, statement=s.statement, content_sha256=s.content_sha256,
                          signed_at=s.signed_at)
            for s in logbook.signatures(db, sortie)
        ],
    )


@router.post("/conditions", response_model=ConditionsRead)
def conditions(data: ConditionsRequest, person: ApiUser):
    """Pressure and density altitude, density ratio and wind components for the conditions given."""
    result = derive.conditions(data)
    if result.message:
        raise Invalid(result.message)
    return result


@router.get("/sorties", response_model=list[SortieRead])
def list_sorties(db: DbSession, person: ApiUser, pilot_id: int | None = None,
                 limit: int = Query(default=50, ge=1, le=500), offset: int = Query(default=0, ge=0)):
    return [sortie_read(db, s) for s in logbook.list_sorties(db, viewer=person, pilot_id=pilot_id,
                                                              limit=limit, offset=offset)]


@router.post("/sorties", response_model=SortieRead, status_code=201)
def create_sortie(data: SortieCreate, db: DbSession, person: ApiUser, once: IdempotentCreate):
    """Start a sortie; with an Idempotency-Key header a resent request creates it only once."""
    return once.run(lambda: sortie_read(db, logbook.create_sortie(db, actor=person, data=data)), status_code=201)


@router.get("/sorties/{sortie_id}", response_model=SortieRead)
def get_sortie(sortie_id: int, db: DbSession, person: ApiUser):
    return sortie_read(db, logbook.get_sortie(db, sortie_id=sortie_id, viewer=person))


@router.patch("/sorties/{sortie_id}", response_model=SortieRead)
def update_sortie(sortie_id: int, data: SortieUpdate, db: DbSession, person: ApiUser):
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    return sortie_read(db, logbook.update_sortie(db, actor=person, sortie=sortie, data=data))


@router.delete("/sorties/{sortie_id}", status_code=204)
def discard_sortie(sortie_id: int, db: DbSession, person: ApiUser):
    """Discard a draft started by mistake: its instructor only, never a signed sortie (409)."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    logbook.discard_sortie(db, actor=person, sortie=sortie)
    return Response(status_code=204)


@router.post("/sorties/{sortie_id}/sign", response_model=SortieRead)
def sign_sortie(sortie_id: int, data: SignRequest, db: DbSession, person: ApiUser):
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    logbook.sign_sortie(db, actor=person, sortie=sortie, password=data.password)
    return sortie_read(db, sortie)


@router.post("/sorties/{sortie_id}/acknowledge", response_model=SortieRead)
def acknowledge_sortie(sortie_id: int, db: DbSession, person: ApiUser):
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    logbook.acknowledge_sortie(db, actor=person, sortie=sortie)
    return sortie_read(db, sortie)


@router.post("/sorties/{sortie_id}/amendments", response_model=SortieRead, status_code=201)
def amend_sortie(sortie_id: int, data: AmendRequest, db: DbSession, person: ApiUser):
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    return sortie_read(db, logbook.amend_sortie(db, actor=person, sortie=sortie, reason=data.reason))


@router.post("/sorties/{sortie_id}/attempts", response_model=AttemptRead, status_code=201)
def add_attempt(sortie_id: int, data: AttemptFields, db: DbSession, person: ApiUser, once: IdempotentCreate):
    """Log an attempt; with an Idempotency-Key header a resent request logs it only once."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person, options=logbook.FOR_LOGGING)
    return once.run(lambda: attempt_read(logbook.add_attempt(db, actor=person, sortie=sortie, data=data)),
                    status_code=201)


@router.get("/attempts/{attempt_id}", response_model=AttemptRead)
def get_attempt(attempt_id: int, db: DbSession, person: ApiUser):
    return attempt_read(logbook.get_attempt(db, attempt_id=attempt_id, viewer=person))


@router.patch("/attempts/{attempt_id}", response_model=AttemptRead)
def update_attempt(attempt_id: int, data: AttemptUpdate, db: DbSession, person: ApiUser):
    """Change some fields of an attempt in a draft sortie; the rest keep their values."""
    attempt = logbook.get_attempt(db, attempt_id=attempt_id, viewer=person)
    merged = {name: getattr(attempt, name) for name in AttemptFields.model_fields}
    merged |= data.model_dump(exclude_unset=True)
    try:
        checked = AttemptFields.model_validate(merged)
    except ValidationError as error:
        raise Invalid("; ".join(e["msg"].removeprefix("Value error, ") for e in error.errors())) from None
    return attempt_read(logbook.update_attempt(db, actor=person, attempt=attempt, data=checked))


@router.delete("/attempts/{attempt_id}", status_code=204)
def delete_attempt(attempt_id: int, db: DbSession, person: ApiUser):
    attempt = logbook.get_attempt(db, attempt_id=attempt_id, viewer=person)
    logbook.delete_attempt(db, actor=person, attempt=attempt)
    return Response(status_code=204)
