"""A record's history: every version, its signatures re-checked, and its audit entries in the chain."""
from dataclasses import dataclass, field

from sqlalchemy import and_, or_, select
from sqlalchemy.orm import Session

from server.logbook import service as logbook
from server.logbook.models import Attempt, Signature, Sortie
from server.people.models import Person
from server.records import audit
from server.records.models import AuditEvent


@dataclass
class VersionView:
    sortie: Sortie
    state: str
    content_sha256: str
    signatures: list[tuple[Signature, str, bool]] = field(default_factory=list)  # row, signer, hash holds


@dataclass
class EntryView:
    event: AuditEvent
    actor: str
    changed: list[str]
    problem: str | None


@dataclass
class RecordHistory:
    versions: list[VersionView]
    entries: list[EntryView]

    @property
    def problems(self) -> list[str]:
        out = [f"audit entry seq {e.event.seq}: {e.problem}" for e in self.entries if e.problem]
        for v in self.versions:
            out += [f"version {v.sortie.version}: the content no longer matches the signature of {name}"
                    for _, name, holds in v.signatures if not holds]
        return out


def _changed(event: AuditEvent) -> list[str]:
    """Names of the fields an edit changed."""
    if not isinstance(event.before, dict) or not isinstance(event.after, dict):
        return []
    return sorted(k for k in set(event.before) | set(event.after) if event.before.get(k) != event.after.get(k))


def record_history(session: Session, sortie: Sortie) -> RecordHistory:
    """Every version of the sortie's record and every audit entry that names one of them or its attempts."""
    versions = logbook.versions(session, sortie)
    names: dict[int | None, str] = {None: "nobody signed in"}

    def name(person_id):
        if person_id not in names:
            person = session.get(Person, person_id)
            names[person_id] = person.name if person else f"person {person_id}"
        return names[person_id]

    views = []
    for version in versions:
        digest = logbook.content_hash(version)
        view = VersionView(sortie=version, state=logbook.display_state(session, version), content_sha256=digest)
        for signature in logbook.signatures(session, version):
            view.signatures.append((signature, name(signature.signer_id), signature.content_sha256 == digest))
        views.append(view)

    sortie_ids = [str(v.id) for v in versions]
    attempt_ids = [str(i) for i in session.scalars(select(Attempt.id).where(Attempt.sortie_id.in_([v.id for v in versions])))]
    events = list(session.scalars(select(AuditEvent).where(or_(
        and_(AuditEvent.entity == "sortie", AuditEvent.entity_id.in_(sortie_ids)),
        and_(AuditEvent.entity == "attempt", AuditEvent.entity_id.in_(attempt_ids)),
    )).order_by(AuditEvent.seq)))
    checks = audit.entry_checks(session, events)
    entries = [EntryView(event=e, actor=name(e.actor_id), changed=_changed(e), problem=checks[e.seq]) for e in events]
    return RecordHistory(versions=views, entries=entries)
