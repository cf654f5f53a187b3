"""Tables for signatures, audit events and idempotency keys."""
from datetime import datetime

from sqlalchemy import JSON, ForeignKey, Integer, String, Text, UniqueConstraint
from sqlalchemy.orm import Mapped, mapped_column

from server.db import Base
from server.types import UTCDateTime, utcnow

MEANINGS = {
    "instructor_certifies": (
        "I certify that this sortie and its practice autorotations took place as recorded, "
        "and that I observed and graded each one."
    ),
    "pilot_acknowledges": "I have read this signed record of my sortie.",
    # Signed by the chief pilot who imports a school's earlier records (issue 14).
    "transcribed_from_records": (
        "I certify that this sortie and its practice autorotations were transcribed from the school's "
        "earlier records as those records show them; I did not observe the flights myself."
    ),
}


class Signature(Base):
    """Who signed which version of a record, when, meaning what, over which content."""

    __tablename__ = "signatures"

    id: Mapped[int] = mapped_column(primary_key=True)
    sortie_id: Mapped[int] = mapped_column(ForeignKey("sorties.id"), index=True)
    signer_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    meaning: Mapped[str] = mapped_column(String(32))
    statement: Mapped[str] = mapped_column(Text)
    content_sha256: Mapped[str] = mapped_column(String(64))
    signed_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)


class AuditEvent(Base):
    """One change or access decision; each row carries the hash of the one before it."""

    __tablename__ = "audit_events"

    id: Mapped[int] = mapped_column(primary_key=True)
    seq: Mapped[int] = mapped_column(Integer, unique=True)
    at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    actor_id: Mapped[int | None] = mapped_column(ForeignKey("people.id"))
    action: Mapped[str] = mapped_column(String(40))
    entity: Mapped[str] = mapped_column(String(40))
    entity_id: Mapped[str | None] = mapped_column(String(40))
    before: Mapped[dict | None] = mapped_column(JSON)
    after: Mapped[dict | None] = mapped_column(JSON)
    reason: Mapped[str | None] = mapped_column(Text)
    prev_hash: Mapped[str] = mapped_column(String(64))
    hash: Mapped[str] = mapped_column(String(64))


class IdempotencyKey(Base):
    """The first answer to a create request, replayed when a tablet sends the same key again."""

    __tablename__ = "idempotency_keys"
    __table_args__ = (UniqueConstraint("person_id", "key"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    person_id: Mapped[int] = mapped_column(ForeignKey("people.id", ondelete="CASCADE"))
    key: Mapped[str] = mapped_column(String(255))
    request_sha256: Mapped[str] = mapped_column(String(64))
    status_code: Mapped[int] = mapped_column(Integer)
    response_body: Mapped[str] = mapped_column(Text)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
