"""Idempotency-Key on create routes: a tablet that resends a request gets the first answer back.

Follows the IETF httpapi draft "The Idempotency-Key HTTP Header Field" (draft-ietf-httpapi-idempotency-key-header):
the key is chosen by the client and scoped here to the signed-in person; a repeat with the same request
gets the first status and body again; the same key with a different request is refused with 422.
The key is stored in the same transaction as the record it created, so both exist or neither does.
A second request with the key while the first is still running waits for it (SQLite's write lock, or
PostgreSQL's unique index) and then gets its answer.
"""
import hashlib
import json
from collections.abc import Callable
from datetime import datetime
from typing import Annotated, Any

from fastapi import Depends, Header, Request, Response
from fastapi.encoders import jsonable_encoder
from pydantic import BaseModel
from sqlalchemy import ForeignKey, Integer, String, Text, UniqueConstraint, select
from sqlalchemy.exc import IntegrityError
from sqlalchemy.orm import Mapped, Session, mapped_column

from server.db import Base, take_writers_turn
from server.deps import DbSession
from server.errors import Conflict, FlarebookError, Invalid
from server.types import UTCDateTime, utcnow

HEADER = "Idempotency-Key"
MAX_KEY_LENGTH = 255


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


class BadKey(FlarebookError):
    status_code = 400


def parse_key(raw: str) -> str:
    """The key's value; the draft sends it as a quoted structured-field string, plain values pass too."""
    value = raw.strip()
    if len(value) >= 2 and value[0] == value[-1] == '"':
        value = value[1:-1]
    if not value or len(value) > MAX_KEY_LENGTH or not value.isprintable():
        raise BadKey(f"{HEADER} must be 1 to {MAX_KEY_LENGTH} printable characters, such as a UUID.")
    return value


def fingerprint(method: str, path: str, body: bytes) -> str:
    """SHA-256 of the request: the same JSON with other spacing or key order counts as the same."""
    try:
        canonical = json.dumps(json.loads(body or b"null"), sort_keys=True, separators=(",", ":"))
    except ValueError:
        canonical = body.decode("utf-8", "replace")
    return hashlib.sha256(f"{method} {path}\n{canonical}".encode()).hexdigest()


class Once:
    """Runs a create at most once per key and person, and remembers its answer."""

    def __init__(self, db: Session, person_id: int, key: str | None, request_sha256: str):
        self.db, self.person_id, self.key, self.request_sha256 = db, person_id, key, request_sha256

    def _stored(self) -> IdempotencyKey | None:
        return self.db.scalar(select(IdempotencyKey).where(IdempotencyKey.person_id == self.person_id,
                                                           IdempotencyKey.key == self.key))

    def _replay(self, row: IdempotencyKey) -> Response:
        if row.request_sha256 != self.request_sha256:
            raise Invalid(f"This {HEADER} was already used for a different request; send a new key.")
        return Response(row.response_body, status_code=row.status_code, media_type="application/json")

    def _claim(self) -> IdempotencyKey | Response:
        row = self._stored()
        if row is not None:
            return self._replay(row)
        claim = IdempotencyKey(person_id=self.person_id, key=self.key, request_sha256=self.request_sha256,
                               status_code=0, response_body="")
        take_writers_turn(self.db)  # before the savepoint: on SQLite a SAVEPOINT would begin a transaction
        try:
            with self.db.begin_nested():
                self.db.add(claim)
        except IntegrityError:
            # Another request with this key committed first: answer as it did.
            row = self._stored()
            if row is None:
                raise Conflict(f"A request with this {HEADER} is still being processed; try again.") from None
            return self._replay(row)
        return claim

    def run(self, create: Callable[[], BaseModel], *, status_code: int) -> BaseModel | Response:
        """The create's answer; with a key seen before, the first answer instead."""
        if self.key is None:
            return create()
        claim = self._claim()
        if isinstance(claim, Response):
            return claim
        body = json.dumps(jsonable_encoder(create()), separators=(",", ":"))
        claim.status_code, claim.response_body = status_code, body
        self.db.flush()
        return Response(body, status_code=status_code, media_type="application/json")


KeyHeader = Annotated[str | None, Header(
    alias=HEADER,
    description="A key of your choosing (a UUID) that makes a resent create happen once; "
                "repeats get the first answer, the same key with another body gets 422.",
)]


def idempotent_create(signed_in: Callable) -> Any:
    """The `IdempotentCreate` dependency, keyed by the person that `signed_in` resolves (people owns sign-in)."""

    async def once(request: Request, db: DbSession, person=Depends(signed_in), raw: KeyHeader = None) -> Once:
        key = parse_key(raw) if raw is not None else None
        digest = fingerprint(request.method, request.url.path, await request.body()) if key else ""
        return Once(db, person.id, key, digest)

    return Annotated[Once, Depends(once)]
