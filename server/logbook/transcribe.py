"""Sorties transcribed from a school's earlier records, created many at a time (imports, issue 14).

The same rules as a sortie typed on the sheet, in bulk: conditions set and derived as `create_sortie`
does, every attempt scored by `derive.score` with the standard `standard_for` names, the sortie's
content written to the audit chain, then sealed by `logbook.seal` (what `record_signature` does for one
sortie) with the meaning "transcribed from earlier records". Rows are inserted a few statements at a
time rather than one unit of work per attempt or sortie (attempts by a multi-row INSERT of their own),
so a file of ten thousand rows imports in seconds.
"""
import math
from dataclasses import dataclass

from sqlalchemy import Float, inspect, insert
from sqlalchemy.orm import Session
from sqlalchemy.orm.attributes import set_committed_value

from server.errors import Forbidden, Invalid
from server.fleet.models import Aircraft, Site
from server.logbook import derive, hooks
from server.logbook import service as logbook
from server.logbook.models import Attempt, Sortie
from server.logbook.schemas import AttemptFields, SortieCreate
from server.people import service as people
from server.people.models import Person
from server.records import audit
from server.types import utcnow
from server.training.service import standard_for

TRANSCRIBED = "transcribed_from_records"


@dataclass
class TranscribedSortie:
    """One sortie of the earlier records: who, when, where, its conditions, and its attempts in order."""

    data: SortieCreate  # instructor_id set
    aircraft: Aircraft
    site: Site
    attempts: list[AttemptFields]


def create_transcribed(session: Session, *, actor: Person, sorties: list[TranscribedSortie],
                       reason: str) -> list[Sortie]:
    """Create, score, audit and sign each sortie; callers have checked every row and that actor is a chief pilot."""
    if not actor.has_role("chief_pilot"):
        raise Forbidden("Only a chief pilot signs sorties transcribed from earlier records.")
    if any(not item.attempts for item in sorties):
        raise Invalid("Log at least one attempt before signing the sortie.")
    built: list[Sortie] = []
    for item in sorties:
        sortie = Sortie(flown_at=item.data.flown_at, aircraft_id=item.aircraft.id, instructor_id=item.data.instructor_id,
                        pilot_id=item.data.pilot_id, site_id=item.site.id, created_by_id=actor.id, state="draft",
                        remarks="", attempts=[])
        sortie.aircraft, sortie.site = item.aircraft, item.site
        logbook._set_conditions(sortie, item.data, item.data.model_fields_set | {"remarks"})
        derive.apply_conditions(sortie)
        _as_stored(sortie, SORTIE_FLOATS)
        built.append(sortie)
    session.add_all(built)
    session.flush()

    zone = people.school_zone(session)  # read once: nothing changes the school's time zone meanwhile
    standards: dict[tuple[int, str], object] = {}  # nothing changes standards during the import
    now = utcnow()
    made: list[Attempt] = []
    for sortie, item in zip(built, sorties, strict=True):
        flown_on = sortie.flown_at.astimezone(zone).date()  # people.local_date, without a query per sortie
        attempts = []
        for sequence, fields in enumerate(item.attempts, start=1):
            key = (sortie.pilot_id, fields.maneuver)
            if key not in standards:
                standards[key] = standard_for(session, pilot_id=sortie.pilot_id, maneuver=fields.maneuver)
            attempt = Attempt(sortie_id=sortie.id, sequence=sequence, pilot_id=sortie.pilot_id, flown_on=flown_on,
                              measured={}, created_at=now, **fields.model_dump())
            derive.score(attempt, sortie, standards[key])
            _as_stored(attempt, ATTEMPT_FLOATS)
            attempts.append(attempt)
        # The sortie's attempts as loaded, so the record below is signed from memory; the rows themselves
        # go in one multi-row INSERT rather than through the unit of work (a fifth of the import's time).
        # That INSERT skips the flush-time check for control characters: AttemptFields (StrictInput)
        # refused them already, and the other text columns hold only our own words.
        set_committed_value(sortie, "attempts", attempts)
        made.extend(attempts)
    # render_nulls: every row has the same columns, so one statement in pages (without it each pattern of
    # empty figures is a statement of its own, and their returned ids are spliced together row by row).
    ids = session.scalars(insert(Attempt).returning(Attempt.id, sort_by_parameter_order=True)
                          .execution_options(render_nulls=True),
                          [{name: attempt.__dict__[name] for name in ATTEMPT_COLUMNS} for attempt in made]).all()
    for attempt, attempt_id in zip(made, ids, strict=True):
        attempt.id = attempt_id

    # Signed from what is in memory: these sorties were made in this transaction, so no one else can
    # have added an attempt (record_signature's lock and re-read guard against that for a typed one).
    # Every sortie's entries in the chain in the same order as one by one (created, then signed), but
    # written in one flush: one read of the chain's head and a few multi-row INSERTs.
    signatures, entries = [], []
    for sortie in built:
        record = logbook.sortie_record(sortie)
        entries.append(dict(actor_id=actor.id, action="create", entity="sortie", entity_id=sortie.id,
                            after=record, reason=reason))
        signature, signed = logbook.seal(actor=actor, sortie=sortie, meaning=TRANSCRIBED, record=record)
        signatures.append(signature)
        entries.append(signed)
    session.add_all(signatures)
    audit.append_many(session, entries)
    hooks.sorties_signed(session, built)  # once for the whole file, not once per sortie
    return built


def _float_columns(model) -> tuple[str, ...]:
    return tuple(column.key for column in inspect(model).column_attrs if isinstance(column.columns[0].type, Float))


SORTIE_FLOATS, ATTEMPT_FLOATS = _float_columns(Sortie), _float_columns(Attempt)
# Every column an inserted attempt sets itself (the id comes back from the INSERT).
ATTEMPT_COLUMNS = tuple(column.key for column in inspect(Attempt).column_attrs if column.key != "id")


def _as_stored(row, names: tuple[str, ...]) -> None:
    """Write -0.0 (a "-0" in the file, or a rounded -0.04 kt headwind) as 0.0: SQLite reads it back as 0.0,
    PostgreSQL as -0.0, and the content signed from memory must be the content read back on either."""
    for name in names:
        value = row.__dict__.get(name)
        if value == 0 and isinstance(value, float) and math.copysign(1.0, value) < 0:
            setattr(row, name, 0.0)
