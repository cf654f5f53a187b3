"""The audit chain: every change and access decision, each row hashed with the one before."""
import hashlib
import json
from datetime import datetime

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.records.models import AuditEvent
from server.types import utcnow

GENESIS = "0" * 64


def canonical_json(value) -> str:
    """One byte-for-byte form of a value: sorted keys, no spaces, ISO timestamps."""
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False, default=_plain)


def _plain(value):
    if isinstance(value, datetime):
        return value.isoformat()
    if hasattr(value, "isoformat"):
        return value.isoformat()
    raise TypeError(f"cannot put {type(value).__name__} in a record")


def event_hash(*, prev_hash: str, seq: int, at: datetime, actor_id: int | None, action: str,
               entity: str, entity_id: str | None, before, after, reason: str | None) -> str:
    body = canonical_json({
        "prev": prev_hash, "seq": seq, "at": at.isoformat(), "actor": actor_id, "action": action,
        "entity": entity, "entity_id": entity_id, "before": before, "after": after, "reason": reason,
    })
    return hashlib.sha256(body.encode()).hexdigest()


def append(session: Session, *, actor_id: int | None, action: str, entity: str,
           entity_id: str | int | None = None, before=None, after=None, reason: str | None = None) -> AuditEvent:
    """Add one audit row in the caller's transaction, chained to the last one."""
    last = session.execute(select(AuditEvent.seq, AuditEvent.hash).order_by(AuditEvent.seq.desc()).limit(1)).first()
    seq, prev_hash = (last.seq + 1, last.hash) if last else (1, GENESIS)
    at = utcnow()
    entity_key = None if entity_id is None else str(entity_id)
    before = json.loads(canonical_json(before)) if before is not None else None
    after = json.loads(canonical_json(after)) if after is not None else None
    row = AuditEvent(
        seq=seq, at=at, actor_id=actor_id, action=action, entity=entity, entity_id=entity_key,
        before=before, after=after, reason=reason, prev_hash=prev_hash,
        hash=event_hash(prev_hash=prev_hash, seq=seq, at=at, actor_id=actor_id, action=action,
                        entity=entity, entity_id=entity_key, before=before, after=after, reason=reason),
    )
    session.add(row)
    session.flush()
    return row
