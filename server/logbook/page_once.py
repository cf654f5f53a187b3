"""Idempotency keys for the sortie sheet's own create forms (start a sortie, add an attempt).

Each form carries a key made when it was drawn (the hidden `idempotency_key` field, or the
`Idempotency-Key` header a replaying tablet sends), so a double tap, a resent post or an outbox
replay creates once. The API's `Once` keeps the key and the answer; a page remembers which record
it made, so a repeat is answered with that record rather than a second one.
"""
import hashlib
import json

from fastapi import Request, Response
from sqlalchemy.orm import Session

from server.idempotency import HEADER, Once, parse_key
from server.people.models import Person

FIELD = "idempotency_key"
# The CSRF token changes when the instructor signs in again; a replay after that is the same request.
NOT_PART_OF_THE_REQUEST = {"csrf_token", FIELD}


def form_fingerprint(method: str, path: str, form) -> str:
    """SHA-256 of the submitted fields, in a fixed order, without the session's token."""
    items = sorted((k, str(v)) for k, v in form.multi_items() if k not in NOT_PART_OF_THE_REQUEST)
    return hashlib.sha256(f"{method} {path}\n{json.dumps(items)}".encode()).hexdigest()


class PageOnce:
    """`claim()` before creating: the first record's payload when the key was seen, else None."""

    def __init__(self, db: Session, person: Person, request: Request, form):
        raw = request.headers.get(HEADER) or form.get(FIELD)
        key = parse_key(str(raw)) if raw else None
        self._once = Once(db, person.id, key, form_fingerprint(request.method, request.url.path, form))
        self._claim = None

    def claim(self) -> dict | None:
        if self._once.key is None:
            return None
        claimed = self._once._claim()
        if isinstance(claimed, Response):
            return json.loads(claimed.body)
        self._claim = claimed
        return None

    def remember(self, payload: dict) -> None:
        """Keep what was made under this key, in the same transaction as the record."""
        if self._claim is not None:
            self._claim.status_code, self._claim.response_body = 201, json.dumps(payload)
            self._once.db.flush()

    def forget(self) -> None:
        """Nothing was made after all (refused input): the key may be used again."""
        if self._claim is not None:
            self._once.db.delete(self._claim)
            self._once.db.flush()
            self._claim = None
