"""`flarebook export`: every record as one JSON document, without secrets."""
import base64
import json
from datetime import date, datetime

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.db import Base
from server.records import audit
from server.types import utcnow

FORMAT = "flarebook-export-1"
# Sign-in secrets and short-lived request state are not records.
SKIPPED_TABLES = {"user_sessions", "api_tokens", "sign_in_failures", "idempotency_keys", "calendar_feeds"}
SKIPPED_COLUMNS = {"password_hash"}


def _plain(value):
    if isinstance(value, datetime | date):
        return value.isoformat()
    if isinstance(value, bytes):  # a recorded track's file, as uploaded (RFC 4648 base64)
        return base64.b64encode(value).decode("ascii")
    raise TypeError(f"cannot export {type(value).__name__}")


def export_records(session: Session) -> dict:
    """Every table's rows in primary-key order, and the audit head to check them against.

    Every table registered on `Base`: the app and the `flarebook` command load them all (`server.models`).
    """
    tables = {}
    for table in Base.metadata.sorted_tables:
        if table.name in SKIPPED_TABLES:
            continue
        columns = [c for c in table.columns if c.name not in SKIPPED_COLUMNS]
        query = select(*columns).order_by(*table.primary_key.columns)
        tables[table.name] = [dict(row._mapping) for row in session.execute(query)]
    head = audit.current_head(session)
    return {"format": FORMAT, "exported_at": utcnow().isoformat(),
            "audit_head": {"seq": head.seq, "hash": head.hash}, "tables": tables}


def export_json(session: Session) -> str:
    return json.dumps(export_records(session), default=_plain, ensure_ascii=False, indent=1)
