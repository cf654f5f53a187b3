"""Sorties and attempts: create, edit while a draft, sign, acknowledge, amend."""
import hashlib
from datetime import UTC, date, datetime, time, timedelta

from pydantic import ValidationError
from sqlalchemy import bindparam, func, select
from sqlalchemy.orm import Session, lazyload

from server.compute.atmosphere import inhg_to_hpa
from server.config import settings_of
from server.db import take_writers_turn
from server.errors import Conflict, Forbidden, Invalid, NotFound
from server.fleet.models import Aircraft, Site
from server.logbook import access, derive, hooks
from server.logbook.models import Attempt, MEANINGS, Signature, Sortie
from server.logbook.schemas import (
    KG_PER_LB,
    AttemptFields,
    ConditionsFields,
    ConditionsRequest,
    SortieCreate,
    SortieUpdate,
)
from server.people import service as people
from server.people.models import Person
from server.records import audit
from server.training.service import standard_for
from server.types import utcnow

ATTEMPT_FIELDS = tuple(AttemptFields.model_fields)
SORTIE_RECORD_FIELDS = (
    "version", "supersedes_id", "amendment_reason", "flown_at", "aircraft_id", "instructor_id",
    "pilot_id", "site_id", "wind_dir_deg", "wind_kt", "gust_kt", "oat_c", "altimeter_hpa", "metar",
    "takeoff_weight_lb", "remarks", "pressure_altitude_ft", "density_altitude_ft",
)
METAR_WORDS = {"altimeter_hpa": "an altimeter setting (hPa) of", "oat_c": "a temperature (°C) of",
               "wind_kt": "a wind speed (kt) of", "gust_kt": "a gust speed (kt) of", "wind_dir_deg": "a wind direction of"}
# A clock set a few hours ahead, or a flight logged in another time zone, is not an error; a day is.
FUTURE_ALLOWANCE = timedelta(days=1)
ATTEMPT_RECORD_FIELDS = ATTEMPT_FIELDS + (
    "sequence", "score", "flags", "standard_id", "flare_band_low_ft", "flare_band_high_ft",
)


# ---- reading -------------------------------------------------------------------------------

# Logging an attempt needs the sortie's own columns and its aircraft's type, not its people or site:
# loading those (two more queries for their roles) was a fifth of the request's database work.
FOR_LOGGING = (lazyload(Sortie.pilot), lazyload(Sortie.instructor), lazyload(Sortie.site))


def get_sortie(session: Session, *, sortie_id: int, viewer: Person, options=()) -> Sortie:
    """A sortie the viewer may see; 404 for one they may not, so its existence is not revealed."""
    sortie = session.get(Sortie, sortie_id, options=options)
    if sortie is None or not may_view(session, viewer=viewer, sortie=sortie):
        raise NotFound("No such sortie.")
    return sortie


def may_view(session: Session, *, viewer: Person, sortie: Sortie) -> bool:
    return sortie.instructor_id == viewer.id or access.can_view_pilot(session, viewer=viewer,
                                                                      pilot_id=sortie.pilot_id)


def get_attempt(session: Session, *, attempt_id: int, viewer: Person) -> Attempt:
    attempt = session.get(Attempt, attempt_id)
    if attempt is None or not may_view(session, viewer=viewer, sortie=attempt.sortie):
        raise NotFound("No such attempt.")
    return attempt


SORTIE_LIST_STATES = ("draft", "signed", "acknowledged")  # signed: waiting for the pilot's acknowledgement


def list_sorties(session: Session, *, viewer: Person, pilot_id: int | None = None, type_id: int | None = None,
                 instructor_id: int | None = None, aircraft_id: int | None = None, state: str | None = None,
                 flown_from: date | None = None, flown_to: date | None = None,
                 limit: int = 50, offset: int = 0) -> list[Sortie]:
    """Newest first, only what the viewer may see, only the latest version of each record.

    `state` is one of SORTIE_LIST_STATES; `flown_from` and `flown_to` are the school's local dates,
    both included.
    """
    superseding = select(Sortie.supersedes_id).where(Sortie.supersedes_id.is_not(None))
    query = select(Sortie).where(Sortie.id.not_in(superseding)).order_by(Sortie.flown_at.desc(), Sortie.id.desc())
    if pilot_id is not None:
        query = query.where(Sortie.pilot_id == pilot_id)
    if instructor_id is not None:
        query = query.where(Sortie.instructor_id == instructor_id)
    if aircraft_id is not None:
        query = query.where(Sortie.aircraft_id == aircraft_id)
    if type_id is not None:
        query = query.where(Sortie.aircraft_id.in_(select(Aircraft.id).where(Aircraft.type_id == type_id)))
    if state is not None:
        if state not in SORTIE_LIST_STATES:
            raise Invalid(f"The record state must be one of: {', '.join(SORTIE_LIST_STATES)}.")
        acknowledged = Sortie.id.in_(select(Signature.sortie_id).where(Signature.meaning == "pilot_acknowledges"))
        query = query.where(Sortie.state == ("draft" if state == "draft" else "signed"))
        if state != "draft":
            query = query.where(acknowledged if state == "acknowledged" else ~acknowledged)
    zone = people.school_zone(session)
    if flown_from is not None:
        query = query.where(Sortie.flown_at >= datetime.combine(flown_from, time.min, tzinfo=zone).astimezone(UTC))
    if flown_to is not None:
        day_after = datetime.combine(flown_to + timedelta(days=1), time.min, tzinfo=zone).astimezone(UTC)
        query = query.where(Sortie.flown_at < day_after)
    if not viewer.sees_everyone:
        ids = {viewer.id}
        if viewer.has_role("instructor"):
            ids |= access.student_ids_of(session, viewer.id)
        query = query.where(Sortie.pilot_id.in_(ids) | (Sortie.instructor_id == viewer.id))
    return list(session.scalars(query.limit(limit).offset(offset)))


def superseded_by(session: Session, sortie: Sortie) -> Sortie | None:
    return session.scalar(select(Sortie).where(Sortie.supersedes_id == sortie.id))


def versions(session: Session, sortie: Sortie) -> list[Sortie]:
    """Every version of this record, oldest first."""
    chain = [sortie]
    while chain[0].supersedes_id is not None:
        chain.insert(0, session.get(Sortie, chain[0].supersedes_id))
    while (newer := superseded_by(session, chain[-1])) is not None:
        chain.append(newer)
    return chain


def signatures(session: Session, sortie: Sortie) -> list[Signature]:
    return list(session.scalars(select(Signature).where(Signature.sortie_id == sortie.id).order_by(Signature.id)))


def display_state(session: Session, sortie: Sortie) -> str:
    """draft or signed as stored; amended once a newer version exists; acknowledged once the pilot read it."""
    if superseded_by(session, sortie) is not None:
        return "amended"
    if sortie.state == "signed" and any(s.meaning == "pilot_acknowledges" for s in signatures(session, sortie)):
        return "acknowledged"
    return sortie.state


def _require_draft(sortie: Sortie) -> None:
    if sortie.state != "draft":
        raise Conflict("This sortie is signed and cannot be changed. Make an amendment with a reason instead.")


def may_edit_sortie(*, person: Person, sortie: Sortie) -> bool:
    """The sortie's instructor or a chief pilot may change it (while it is a draft)."""
    return sortie.instructor_id == person.id or person.has_role("chief_pilot")


def _require_editor(session: Session, *, actor: Person, sortie: Sortie) -> None:
    if not may_edit_sortie(person=actor, sortie=sortie):
        raise Forbidden("Only the sortie's instructor or a chief pilot can change it.")


def _set_conditions(sortie: Sortie, data: SortieCreate | SortieUpdate, fields_set: set[str]) -> None:
    for name in ("wind_dir_deg", "wind_kt", "gust_kt", "oat_c", "metar", "remarks"):
        if name in fields_set:
            setattr(sortie, name, getattr(data, name))
    if "altimeter_hpa" in fields_set and data.altimeter_hpa is not None:
        sortie.altimeter_hpa, sortie.altimeter_unit = data.altimeter_hpa, "hPa"
    elif "altimeter_inhg" in fields_set and data.altimeter_inhg is not None:
        sortie.altimeter_hpa, sortie.altimeter_unit = round(inhg_to_hpa(data.altimeter_inhg), 2), "inHg"
    elif "altimeter_hpa" in fields_set or "altimeter_inhg" in fields_set:
        sortie.altimeter_hpa = None
    if "takeoff_weight_kg" in fields_set and data.takeoff_weight_kg is not None:
        sortie.takeoff_weight_lb = round(data.takeoff_weight_kg / KG_PER_LB, 1)
    elif "takeoff_weight_lb" in fields_set:
        sortie.takeoff_weight_lb = data.takeoff_weight_lb
    _fill_from_metar(sortie)


def _fill_from_metar(sortie: Sortie) -> None:
    """A METAR fills the conditions it carries that were left empty."""
    if not sortie.metar:
        return
    result = derive.conditions(ConditionsRequest(metar=sortie.metar))
    if result.message:
        raise Invalid(result.message)
    carried = {name: getattr(result, name) for name in result.filled_from_metar}
    try:  # the METAR's figures meet the same ranges as typed ones (Q0000, A9999, M99/M99 do not)
        ConditionsFields.model_validate(carried)
    except ValidationError as error:
        raise Invalid("The METAR gives " + "; ".join(
            f"{METAR_WORDS.get(item['loc'][0], item['loc'][0])} {carried[item['loc'][0]]:g}, which "
            f"{item['msg'].lower().replace('input should be', 'should be')}"
            for item in error.errors() if item["loc"]) + ". Check the report, or enter the conditions by hand.") from None
    for name in ("wind_dir_deg", "wind_kt", "gust_kt", "oat_c", "altimeter_hpa"):
        if getattr(sortie, name) is None and name in result.filled_from_metar:
            setattr(sortie, name, getattr(result, name))


def check_flown_at(session: Session, flown_at: datetime) -> None:
    """A flight not before the school's records begin, nor more than a day ahead: else a typing error."""
    begins = settings_of(session).records_begin
    if flown_at.astimezone(UTC).date() < begins:
        raise Invalid(f"flown_at is before {begins.isoformat()}, when this school's records begin; check the year.")
    if flown_at > utcnow() + FUTURE_ALLOWANCE:
        raise Invalid("flown_at is more than a day in the future; check the date.")


def create_sortie(session: Session, *, actor: Person, data: SortieCreate) -> Sortie:
    """Start a sortie; the instructor is the caller unless a chief pilot names another."""
    check_flown_at(session, data.flown_at)
    if not actor.has_role("instructor", "chief_pilot"):
        raise Forbidden("Only instructors and chief pilots start sorties.")
    instructor_id = data.instructor_id if data.instructor_id is not None else actor.id
    if instructor_id != actor.id and not actor.has_role("chief_pilot"):
        raise Forbidden("An instructor starts sorties in their own name.")
    if not actor.has_role("chief_pilot") and not access.can_view_pilot(session, viewer=actor, pilot_id=data.pilot_id):
        # Else an empty sortie would be a way in to any pilot's records; a chief pilot assigns others.
        raise Forbidden("You can start a sortie only for a pilot enrolled with you; a chief pilot can assign "
                        "you another.")
    instructor = session.get(Person, instructor_id)
    if instructor is None or not instructor.has_role("instructor"):
        raise Invalid("instructor_id does not name an instructor.")
    pilot = session.get(Person, data.pilot_id)
    if pilot is None or not pilot.active:
        raise Invalid("pilot_id does not name an active person.")
    if session.get(Aircraft, data.aircraft_id) is None:
        raise Invalid("aircraft_id does not name an aircraft.")
    if session.get(Site, data.site_id) is None:
        raise Invalid("site_id does not name a site.")
    sortie = Sortie(
        flown_at=data.flown_at, aircraft_id=data.aircraft_id, instructor_id=instructor_id,
        pilot_id=data.pilot_id, site_id=data.site_id, created_by_id=actor.id, state="draft",
        remarks="",
    )
    _set_conditions(sortie, data, data.model_fields_set | {"remarks"})
    session.add(sortie)
    session.flush()
    session.refresh(sortie)
    derive.apply_conditions(sortie)
    audit.append(session, actor_id=actor.id, action="create", entity="sortie", entity_id=sortie.id,
                 after=sortie_record(sortie))
    return sortie


def update_sortie(session: Session, *, actor: Person, sortie: Sortie, data: SortieUpdate) -> Sortie:
    """Change a draft's conditions; every attempt is rescored with them."""
    _require_editor(session, actor=actor, sortie=sortie)
    _require_draft(sortie)
    before = sortie_record(sortie)
    fields_set = data.model_fields_set
    if "flown_at" in fields_set and data.flown_at is not None:
        check_flown_at(session, data.flown_at)
        sortie.flown_at = data.flown_at
    if "pilot_id" in fields_set and data.pilot_id is not None and data.pilot_id != sortie.pilot_id:
        pilot = session.get(Person, data.pilot_id)
        if pilot is None or not pilot.active:  # the same rule as starting a sortie
            raise Invalid("pilot_id does not name an active person.")
        sortie.pilot_id = pilot.id
        for attempt in sortie.attempts:
            attempt.pilot_id = pilot.id
    if "aircraft_id" in fields_set and data.aircraft_id is not None:
        if session.get(Aircraft, data.aircraft_id) is None:
            raise Invalid("aircraft_id does not name an aircraft.")
        sortie.aircraft_id = data.aircraft_id
    if "site_id" in fields_set and data.site_id is not None:
        if session.get(Site, data.site_id) is None:
            raise Invalid("site_id does not name a site.")
        sortie.site_id = data.site_id
    _set_conditions(sortie, data, fields_set)
    session.flush()
    session.expire(sortie, ["aircraft", "site", "pilot"])
    derive.apply_conditions(sortie)
    for attempt in sortie.attempts:
        attempt.flown_on = people.local_date(session, sortie.flown_at)
        derive.score(attempt, sortie, standard_for(session, pilot_id=sortie.pilot_id, maneuver=attempt.maneuver))
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="sortie", entity_id=sortie.id,
                 before=before, after=sortie_record(sortie))
    return sortie


def discard_sortie(session: Session, *, actor: Person, sortie: Sortie) -> None:
    """Throw away a draft started by mistake; its content stays in the audit chain. Never a signed one."""
    if sortie.instructor_id != actor.id:
        raise Forbidden("Only the sortie's instructor can discard it.")
    if sortie.state != "draft":
        raise Conflict("A signed sortie is never discarded. Make an amendment with a reason instead.")
    before = sortie_record(sortie)
    session.delete(sortie)
    session.flush()
    audit.append(session, actor_id=actor.id, action="discard", entity="sortie", entity_id=before["id"],
                 before=before)


def add_attempt(session: Session, *, actor: Person, sortie: Sortie, data: AttemptFields) -> Attempt:
    """Log one practice autorotation and score it at once.

    Checked and scored first, outside the writer's turn; the turn is held only for the insert, the
    audit entry and the commit (server/write_queue.py, LATE_TURN_ROUTES), and under it the sortie is
    checked again: still a draft, unchanged since it was read (else scored again), the next sequence.
    """
    _require_editor(session, actor=actor, sortie=sortie)
    _require_draft(sortie)
    standard = standard_for(session, pilot_id=sortie.pilot_id, maneuver=data.maneuver)
    attempt = Attempt(pilot_id=sortie.pilot_id, flown_on=people.local_date(session, sortie.flown_at),
                      **data.model_dump())
    derive.score(attempt, sortie, standard)
    if _hold_draft(session, sortie):
        attempt.flown_on = people.local_date(session, sortie.flown_at)
        derive.score(attempt, sortie, standard)
    attempt.sequence = (session.scalar(_LAST_SEQUENCE, {"sortie_id": sortie.id}) or 0) + 1
    attempt.sortie = sortie
    session.add(attempt)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="attempt", entity_id=attempt.id,
                 after=attempt_record(attempt))
    return attempt


# Built once (the attempt route runs them on every request). One SQL max, not a load of every attempt
# of the sortie: logging stays quick as a sortie grows. FOR UPDATE: on PostgreSQL a signature, or
# another attempt of the sortie, waits for this commit (SQLite's writer's turn already serialises).
_LAST_SEQUENCE = select(func.max(Attempt.sequence)).where(Attempt.sortie_id == bindparam("sortie_id"))
_DRAFT_ROW = select(Sortie.state, Sortie.updated_at).where(Sortie.id == bindparam("sortie_id")).with_for_update()


def _hold_draft(session: Session, sortie: Sortie) -> bool:
    """Take the writer's turn and lock the sortie's row; refuse it if no longer a draft.

    True when the sortie was changed since it was read (it is read again): what was derived from it
    must be derived again.
    """
    take_writers_turn(session)
    now = session.execute(_DRAFT_ROW, {"sortie_id": sortie.id}).one()
    changed = (now.state, now.updated_at) != (sortie.state, sortie.updated_at)
    if changed:
        session.refresh(sortie)
        _require_draft(sortie)
    return changed


def update_attempt(session: Session, *, actor: Person, attempt: Attempt, data: AttemptFields) -> Attempt:
    sortie = attempt.sortie
    _require_editor(session, actor=actor, sortie=sortie)
    _require_draft(sortie)
    before = attempt_record(attempt)
    for name, value in data.model_dump().items():
        setattr(attempt, name, value)
    derive.score(attempt, sortie, standard_for(session, pilot_id=sortie.pilot_id, maneuver=data.maneuver))
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="attempt", entity_id=attempt.id,
                 before=before, after=attempt_record(attempt))
    return attempt


def delete_attempt(session: Session, *, actor: Person, attempt: Attempt) -> None:
    sortie = attempt.sortie
    _require_editor(session, actor=actor, sortie=sortie)
    _require_draft(sortie)
    before = attempt_record(attempt)
    sortie.attempts.remove(attempt)
    session.flush()
    audit.append(session, actor_id=actor.id, action="delete", entity="attempt", entity_id=before["id"],
                 before=before)


# ---- signatures and amendments -------------------------------------------------------------

def sortie_record(sortie: Sortie) -> dict:
    """The canonical content of one sortie version, attempts included, as signed."""
    record = {name: getattr(sortie, name) for name in SORTIE_RECORD_FIELDS}
    record["id"] = sortie.id
    record["flown_at"] = sortie.flown_at.isoformat()
    record["attempts"] = [attempt_record(a) for a in sorted(sortie.attempts, key=lambda a: a.sequence)]
    # The recorded tracks that figures were measured from are part of what is signed (only when there are
    # any, so records signed before tracks existed keep their content hash).
    used = sorted({sha for a in sortie.attempts for sha in a.track_sha256s})
    if used:
        record["track_sha256s"] = used
    return record


def attempt_record(attempt: Attempt) -> dict:
    record = {name: getattr(attempt, name) for name in ATTEMPT_RECORD_FIELDS}
    record["id"] = attempt.id
    if attempt.measured_fields:
        record["measured"] = {name: attempt.measured[name] for name in attempt.measured_fields}
    return record


def content_hash(sortie: Sortie) -> str:
    return record_hash(sortie_record(sortie))


def record_hash(record: dict) -> str:
    """The signed content hash of a `sortie_record`."""
    return hashlib.sha256(audit.canonical_json(record).encode()).hexdigest()


def sign_sortie(session: Session, *, actor: Person, sortie: Sortie, password: str) -> Signature:
    """The assigned instructor certifies the sortie, re-entering their password in this request."""
    if sortie.instructor_id != actor.id:
        audit.append(session, actor_id=actor.id, action="sign_refused", entity="sortie", entity_id=sortie.id,
                     reason="not the assigned instructor")
        raise Forbidden("Only the sortie's assigned instructor can sign it.")
    _require_draft(sortie)
    try:
        people.check_signing_password(session, person=actor, password=password)
    except Invalid as refusal:
        audit.append(session, actor_id=actor.id, action="sign_refused", entity="sortie", entity_id=sortie.id,
                     reason="wrong password")
        raise Invalid(refusal.message + " The sortie stays unsigned.", keep_record=True) from None
    return record_instructor_signature(session, actor=actor, sortie=sortie)


def record_instructor_signature(session: Session, *, actor: Person, sortie: Sortie) -> Signature:
    """Seal a draft with the instructor's signature; callers have checked who signs and how."""
    return record_signature(session, actor=actor, sortie=sortie, meaning="instructor_certifies")


def record_signature(session: Session, *, actor: Person, sortie: Sortie, meaning: str,
                     tell_others: bool = True) -> Signature:
    """Seal a draft with a signature that means one of MEANINGS; callers have checked who signs and how.

    tell_others=False leaves `hooks.sorties_signed` to a caller that signs many sorties and tells once."""
    _hold_draft(session, sortie)  # an attempt being logged meanwhile is committed first, or refused after
    session.expire(sortie, ["attempts"])  # so the signed content holds every attempt committed before
    if not sortie.attempts:
        raise Invalid("Log at least one attempt before signing the sortie.")
    signature, entry = seal(actor=actor, sortie=sortie, meaning=meaning, record=sortie_record(sortie))
    session.add(signature)
    session.flush()
    audit.append(session, **entry)
    if tell_others:
        hooks.sorties_signed(session, [sortie])
    return signature


def seal(*, actor: Person, sortie: Sortie, meaning: str, record: dict) -> tuple[Signature, dict]:
    """Mark a draft signed: its Signature over `record` (its `sortie_record`, read by the caller with every
    attempt it holds), and the audit entry (`audit.append` keywords) that keeps the record as signed.

    The caller adds both to the session; `record_signature` for one sortie, an import for many at once."""
    sortie.state = "signed"
    signature = Signature(sortie_id=sortie.id, signer_id=actor.id, meaning=meaning,
                          statement=MEANINGS[meaning], content_sha256=record_hash(record))
    # The record as signed goes into the chain too, so a later check can say which field changed.
    entry = dict(actor_id=actor.id, action="sign", entity="sortie", entity_id=sortie.id,
                 after={"content_sha256": signature.content_sha256, "meaning": meaning, "record": record})
    return signature, entry


def acknowledge_sortie(session: Session, *, actor: Person, sortie: Sortie) -> Signature:
    """The pilot acknowledges having read a signed sortie."""
    if sortie.pilot_id != actor.id:
        raise Forbidden("Only the pilot of this sortie can acknowledge it.")
    people.require_own_password(actor)
    if sortie.state != "signed" or superseded_by(session, sortie) is not None:
        raise Conflict("Only the latest signed version of a sortie can be acknowledged.")
    if any(s.meaning == "pilot_acknowledges" and s.signer_id == actor.id for s in signatures(session, sortie)):
        raise Conflict("You have acknowledged this sortie already.")
    signature = Signature(sortie_id=sortie.id, signer_id=actor.id, meaning="pilot_acknowledges",
                          statement=MEANINGS["pilot_acknowledges"], content_sha256=content_hash(sortie))
    session.add(signature)
    session.flush()
    audit.append(session, actor_id=actor.id, action="acknowledge", entity="sortie", entity_id=sortie.id,
                 after={"content_sha256": signature.content_sha256})
    return signature


def amend_sortie(session: Session, *, actor: Person, sortie: Sortie, reason: str) -> Sortie:
    """Start a new, unsigned version of a signed sortie; the signed one stays as it was."""
    _require_editor(session, actor=actor, sortie=sortie)
    if sortie.state != "signed":
        raise Conflict("A draft can be edited directly; only a signed sortie needs an amendment.")
    if superseded_by(session, sortie) is not None:
        raise Conflict("This version has been amended already; amend the latest version.")
    if not reason or len(reason.strip()) < 3:
        raise Invalid("Say why the signed record is being amended.")
    copy = Sortie(
        version=sortie.version + 1, supersedes_id=sortie.id, amendment_reason=reason.strip(), state="draft",
        created_by_id=actor.id,
        **{name: getattr(sortie, name) for name in SORTIE_RECORD_FIELDS
           if name not in ("version", "supersedes_id", "amendment_reason")},
        altimeter_unit=sortie.altimeter_unit, density_ratio=sortie.density_ratio,
    )
    session.add(copy)
    session.flush()
    for old in sortie.attempts:
        values = {name: getattr(old, name) for name in ATTEMPT_FIELDS}
        clone = Attempt(sortie_id=copy.id, sequence=old.sequence, pilot_id=old.pilot_id, flown_on=old.flown_on,
                        standard_id=old.standard_id, headwind_kt=old.headwind_kt, crosswind_kt=old.crosswind_kt,
                        flare_band_low_ft=old.flare_band_low_ft, flare_band_high_ft=old.flare_band_high_ft,
                        score=old.score, parts=old.parts, flags=old.flags, satisfactory=old.satisfactory,
                        within_tolerances=old.within_tolerances, measured=dict(old.measured or {}), **values)
        session.add(clone)
    session.flush()
    session.refresh(copy)
    audit.append(session, actor_id=actor.id, action="amend", entity="sortie", entity_id=copy.id,
                 before={"supersedes_id": sortie.id}, after=sortie_record(copy), reason=reason.strip())
    return copy
