"""Sorties transcribed from a school's earlier records, created many at a time (imports, issue 14).

The same rules as a sortie typed on the sheet, in bulk: conditions set and derived as `create_sortie`
does, every attempt scored by `derive.score` with the standard `standard_for` names, the sortie's
content written to the audit chain, then sealed by `record_signature` with the meaning
"transcribed from earlier records". Rows are inserted a few statements at a time rather than one
unit of work per attempt, so a file of ten thousand rows imports in seconds.
"""
from dataclasses import dataclass

from sqlalchemy.orm import Session

from server.errors import Forbidden
from server.fleet.models import Aircraft, Site
from server.logbook import derive, hooks
from server.logbook import service as logbook
from server.logbook.models import Attempt, Sortie
from server.logbook.schemas import AttemptFields, SortieCreate
from server.people import service as people
from server.people.models import Person
from server.records import audit
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
    built: list[Sortie] = []
    for item in sorties:
        sortie = Sortie(flown_at=item.data.flown_at, aircraft_id=item.aircraft.id, instructor_id=item.data.instructor_id,
                        pilot_id=item.data.pilot_id, site_id=item.site.id, created_by_id=actor.id, state="draft",
                        remarks="", attempts=[])
        sortie.aircraft, sortie.site = item.aircraft, item.site
        logbook._set_conditions(sortie, item.data, item.data.model_fields_set | {"remarks"})
        derive.apply_conditions(sortie)
        built.append(sortie)
    session.add_all(built)
    session.flush()

    school = people.school(session)  # held, so the session's weak identity map keeps it for local_date
    standards: dict[tuple[int, str], object] = {}  # nothing changes standards during the import
    # No flush between attempts: they go to the database together, a few multi-row INSERTs in all.
    with session.no_autoflush:
        for sortie, item in zip(built, sorties, strict=True):
            flown_on = people.local_date(session, sortie.flown_at)
            for sequence, fields in enumerate(item.attempts, start=1):
                key = (sortie.pilot_id, fields.maneuver)
                if key not in standards:
                    standards[key] = standard_for(session, pilot_id=sortie.pilot_id, maneuver=fields.maneuver)
                attempt = Attempt(sequence=sequence, pilot_id=sortie.pilot_id, flown_on=flown_on,
                                  **fields.model_dump())
                sortie.attempts.append(attempt)
                derive.score(attempt, sortie, standards[key])
    session.flush()
    del school

    for sortie in built:
        audit.append(session, actor_id=actor.id, action="create", entity="sortie", entity_id=sortie.id,
                     after=logbook.sortie_record(sortie), reason=reason)
        logbook.record_signature(session, actor=actor, sortie=sortie, meaning=TRANSCRIBED, tell_others=False)
    hooks.sorties_signed(session, built)  # once for the whole file, not once per sortie
    return built
