"""The audit chain: every change and access decision, each row hashed with the one before.

An entry is made in two steps. `append` fixes its content (actor, action, before, after, time) in the
caller's transaction; its link in the chain (sequence number, previous hash, own hash) is filled in when
the session flushes it, after the chain's turn is taken (at once, except in a late-turn transaction,
server.db.mark_late_turn, where that is at the commit): on SQLite the writer's
turn (BEGIN IMMEDIATE), on PostgreSQL a transaction-scoped advisory lock. So the chain is serial only
for its last read of the head, the INSERT and the COMMIT, and several processes on one PostgreSQL keep
one chain with no gap and no fork.
"""
import hashlib
import json
from collections.abc import Iterable
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from sqlalchemy import event, select, text
from sqlalchemy.orm import Session

from server.db import LATE_TURN, take_writers_turn

from server.records.models import AuditEvent
from server.types import utcnow

GENESIS = "0" * 64
# Any fixed number: the PostgreSQL advisory lock that queues chain links (released at commit).
APPEND_LOCK_KEY = 0x464C4152


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
    """Add one audit entry in the caller's transaction; it is chained to the last one when flushed."""
    return append_many(session, [dict(actor_id=actor_id, action=action, entity=entity, entity_id=entity_id,
                                      before=before, after=after, reason=reason)])[0]


def append_many(session: Session, entries: Iterable[dict]) -> list[AuditEvent]:
    """Add several audit entries (each `append`'s keywords), chained in this order, in one flush.

    For a caller that writes many records at once (an import): one read of the chain's head and one
    multi-row INSERT, instead of one of each per entry; the links and hashes are the same."""
    rows = [_entry(**entry) for entry in entries]
    session.add_all(rows)
    session.info.setdefault(UNLINKED, []).extend(rows)
    if not session.info.get(LATE_TURN):
        # A transaction that holds the turn anyway links now, where it appends (in its own thread: an
        # async route's later autoflush on the event loop must not wait for the chain's lock there).
        session.flush()
    return rows


def _entry(*, actor_id: int | None, action: str, entity: str, entity_id: str | int | None = None, before=None,
           after=None, reason: str | None = None) -> AuditEvent:
    return AuditEvent(
        at=utcnow(), actor_id=actor_id, action=action, entity=entity,
        entity_id=None if entity_id is None else str(entity_id), reason=reason,
        before=json.loads(canonical_json(before)) if before is not None else None,
        after=json.loads(canonical_json(after)) if after is not None else None,
    )


UNLINKED = "flarebook_audit_unlinked"  # session.info: entries appended and not yet flushed, in order


@event.listens_for(Session, "before_flush")
def _link_appended(session: Session, _flush_context, _instances) -> None:
    """Give the entries about to be written their place in the chain, under the chain's turn."""
    appended = session.info.pop(UNLINKED, None)
    pending = session.new  # built anew on each read: read once, not once per entry (an import appends thousands)
    rows = [row for row in appended or () if row in pending]  # a rolled-back savepoint drops its rows
    if not rows:
        return
    _take_chain_turn(session)
    seq, prev_hash = _head(session)
    for row in rows:
        seq += 1
        row.seq, row.prev_hash = seq, prev_hash
        row.hash = prev_hash = row_hash(row)


def _take_chain_turn(session: Session) -> None:
    """Make chain links take turns, so two transactions never chain to the same last row.

    SQLite: the writer's turn (BEGIN IMMEDIATE, already held when the transaction began as a writer).
    PostgreSQL: a transaction-scoped advisory lock, held until commit or rollback.
    """
    take_writers_turn(session)
    if session.get_bind().dialect.name == "postgresql":
        session.execute(text("SELECT pg_advisory_xact_lock(:key)"), {"key": APPEND_LOCK_KEY})


def _head(session: Session) -> tuple[int, str]:
    last = session.execute(_HEAD).first()
    return (last.seq, last.hash) if last else (0, GENESIS)


_HEAD = select(AuditEvent.seq, AuditEvent.hash).order_by(AuditEvent.seq.desc()).limit(1)  # built once


def row_hash(row: AuditEvent) -> str:
    """The hash a stored row should carry, recomputed from its content."""
    return event_hash(prev_hash=row.prev_hash, seq=row.seq, at=row.at, actor_id=row.actor_id, action=row.action,
                      entity=row.entity, entity_id=row.entity_id, before=row.before, after=row.after,
                      reason=row.reason)


# ---- checking the chain --------------------------------------------------------------------

@dataclass(frozen=True)
class Head:
    """The last entry of the chain, kept outside the database so that truncation shows."""

    seq: int
    hash: str

    def to_json(self) -> str:
        return json.dumps({"seq": self.seq, "hash": self.hash}) + "\n"

    @classmethod
    def read(cls, path: Path) -> "Head":
        try:
            data = json.loads(Path(path).read_text())
            head = cls(seq=int(data["seq"]), hash=str(data["hash"]))
        except (OSError, ValueError, KeyError, TypeError) as error:
            raise ValueError(f"{path} is not an exported audit head ({error})") from None
        if head.seq < 0 or len(head.hash) != 64:
            raise ValueError(f"{path} is not an exported audit head")
        return head


@dataclass(frozen=True)
class Problem:
    """The first entry that breaks the chain, and what is wrong with it."""

    seq: int
    what: str

    def __str__(self) -> str:
        return f"audit entry seq {self.seq}: {self.what}"


@dataclass(frozen=True)
class ChainReport:
    entries: int
    head: Head
    problem: Problem | None

    @property
    def ok(self) -> bool:
        return self.problem is None


def current_head(session: Session) -> Head:
    seq, hash_ = _head(session)
    return Head(seq=seq, hash=hash_)


def check_rows(rows: Iterable[AuditEvent], kept_head: Head | None = None) -> ChainReport:
    """Walk rows in seq order from seq 1; stop at the first one that breaks the chain."""
    expected_seq, prev_hash, count = 1, GENESIS, 0
    for row in rows:
        if row.seq != expected_seq:
            return ChainReport(count, Head(expected_seq - 1, prev_hash), Problem(
                expected_seq, f"missing (the next entry in the database is seq {row.seq})"))
        if row.prev_hash != prev_hash:
            return ChainReport(count, Head(expected_seq - 1, prev_hash), Problem(
                row.seq, f"does not follow seq {row.seq - 1}: its prev_hash is not that entry's hash"))
        if row_hash(row) != row.hash:
            return ChainReport(count, Head(expected_seq - 1, prev_hash), Problem(
                row.seq, "changed after it was written: its content does not match its hash"))
        if kept_head is not None and row.seq == kept_head.seq and row.hash != kept_head.hash:
            return ChainReport(count, Head(expected_seq - 1, prev_hash), Problem(
                row.seq, "differs from the exported head: the chain was rewritten from here or earlier"))
        count, prev_hash, expected_seq = count + 1, row.hash, expected_seq + 1
    head = Head(expected_seq - 1, prev_hash)
    if kept_head is not None and head.seq < kept_head.seq:
        return ChainReport(count, head, Problem(
            head.seq + 1, f"missing: the chain ends at seq {head.seq} but the exported head is seq {kept_head.seq}"))
    return ChainReport(count, head, None)


def verify(session: Session, kept_head: Head | None = None) -> ChainReport:
    """Check the whole chain in the database, optionally against a head kept outside it."""
    rows = session.scalars(select(AuditEvent).order_by(AuditEvent.seq).execution_options(yield_per=500))
    return check_rows(rows, kept_head)


def entry_checks(session: Session, rows: list[AuditEvent]) -> dict[int, str | None]:
    """For a few rows (one record's), what is wrong with each, or None when it holds in the chain."""
    previous = {seq: h for seq, h in session.execute(
        select(AuditEvent.seq, AuditEvent.hash).where(AuditEvent.seq.in_([r.seq - 1 for r in rows])))}
    out = {}
    for row in rows:
        expected_prev = GENESIS if row.seq == 1 else previous.get(row.seq - 1)
        if row_hash(row) != row.hash:
            out[row.seq] = "content does not match its hash"
        elif expected_prev is None:
            out[row.seq] = f"entry seq {row.seq - 1} before it is missing"
        elif row.prev_hash != expected_prev:
            out[row.seq] = f"does not follow entry seq {row.seq - 1}"
        else:
            out[row.seq] = None
    return out
