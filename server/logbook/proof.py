"""The signed-record check of sorties: every signature of every version, against the content as stored
now and against the sign or acknowledge entry the audit chain recorded at the time."""
import json
from collections.abc import Iterator

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.logbook import service as logbook
from server.logbook.models import Signature, Sortie
from server.records import audit
from server.records.models import AuditEvent
from server.records.proof import SignedProblem, differences

# The chain entry each meaning of signature is recorded with.
ENTRY_ACTIONS = {"instructor_certifies": "sign", "transcribed_from_records": "sign", "pilot_acknowledges": "acknowledge"}


def _canonical(record: dict) -> dict:
    return json.loads(audit.canonical_json(record))


def _what_differs(signed: dict, now: dict) -> list[str]:
    out = differences(signed, now)
    before = {a["id"]: a for a in signed.get("attempts", [])}
    after = {a["id"]: a for a in now.get("attempts", [])}
    for attempt_id in sorted(set(before) | set(after)):
        if attempt_id not in after:
            out.append(f"attempt id {attempt_id} is missing now")
        elif attempt_id not in before:
            out.append(f"attempt id {attempt_id} was not there when signed")
        else:
            out += differences(before[attempt_id], after[attempt_id],
                               prefix=f"attempt {before[attempt_id].get('sequence')} (id {attempt_id}) ")
    return out


def check_signed_sorties(session: Session) -> Iterator[SignedProblem]:
    """Problems of signed sortie versions: content, signature hash and chain entry must all agree."""
    signatures: dict[int, list[Signature]] = {}
    for signature in session.scalars(select(Signature).order_by(Signature.sortie_id, Signature.id)):
        signatures.setdefault(signature.sortie_id, []).append(signature)
    for sortie_id, rows in signatures.items():
        sortie = session.get(Sortie, sortie_id)
        record = f"sortie {sortie_id}"
        if sortie is None:
            yield SignedProblem(record, None, "has signatures but no sortie row")
            continue
        if sortie.state != "signed":
            yield SignedProblem(record, sortie.version, f"has signatures but its state is {sortie.state!r}")
        now = _canonical(logbook.sortie_record(sortie))
        digest = logbook.content_hash(sortie)
        entries = {action: list(session.scalars(
            select(AuditEvent).where(AuditEvent.entity == "sortie", AuditEvent.entity_id == str(sortie_id),
                                     AuditEvent.action == action).order_by(AuditEvent.seq)))
            for action in set(ENTRY_ACTIONS.values())}
        taken = {action: 0 for action in entries}
        for signature in rows:
            action = ENTRY_ACTIONS.get(signature.meaning)
            if action is None:
                yield SignedProblem(record, sortie.version, f"signature {signature.id} has an unknown meaning "
                                                            f"{signature.meaning!r}")
                continue
            found = entries[action][taken[action]] if taken[action] < len(entries[action]) else None
            taken[action] += 1
            yield from _check_one(record, sortie.version, signature, found, now, digest)


def _check_one(record: str, version: int, signature: Signature, entry: AuditEvent | None, now: dict,
               digest: str) -> Iterator[SignedProblem]:
    who = f"the {signature.meaning.replace('_', ' ')} signature (id {signature.id})"
    if entry is None:
        yield SignedProblem(record, version, f"{who} has no {ENTRY_ACTIONS[signature.meaning]} entry in the audit chain")
        return
    recorded = (entry.after or {}).get("content_sha256")
    if entry.actor_id != signature.signer_id:
        yield SignedProblem(record, version, f"{who} names signer {signature.signer_id}; the chain recorded "
                                             f"{entry.actor_id} (seq {entry.seq})")
    if digest != signature.content_sha256 or digest != recorded:
        signed_record = (entry.after or {}).get("record")
        details = _what_differs(signed_record, now) if isinstance(signed_record, dict) else []
        what = "; ".join(details) if details else "its content does not match the hash recorded at signing"
        yield SignedProblem(record, version, f"changed after {who} (chain seq {entry.seq}): {what}")
    if recorded != signature.content_sha256:
        yield SignedProblem(record, version, f"{who}: its stored hash differs from the hash the chain recorded "
                                             f"at signing (seq {entry.seq})")
