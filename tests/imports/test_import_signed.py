"""A bulk import's sorties, signed in one go, verify as a sortie signed on the sheet does: read back from
the database (SQLite, or PostgreSQL with FLAREBOOK_TEST_DATABASE_URL), each one's content hash is the
SHA-256 (Python's hashlib, the outside reference) of its canonical JSON, and the audit chain holds a
create entry and then a sign entry for every sortie, in file order, before the batch's own entry."""
import hashlib
import json
from datetime import timedelta

from sqlalchemy import select

from server.imports.models import ImportedRecord
from server.logbook import service as logbook
from server.logbook.models import Signature, Sortie
from server.records import audit
from server.records.models import AuditEvent
from server.records.proof import check_signed
from server.signed_records import RECORD_CHECKS
from tests.imports.test_import_api import ATTEMPT_HEADER, RECENT, attempt_row, post
from tests.imports.test_reading import csv_bytes


def _negative_zero(row: list) -> list:
    """The row with its aim-point distance and heading error written "-0": a negative zero, which SQLite
    reads back as 0.0 and PostgreSQL as -0.0."""
    row = list(row)
    row[ATTEMPT_HEADER.index("Distance from aim point (ft)")] = "-0"
    row[ATTEMPT_HEADER.index("Heading error")] = "-0"
    return row


def test_a_bulk_import_verifies_as_signed_records_read_back(chief_client, db, world):
    rows = [ATTEMPT_HEADER]
    for day in range(12):  # twelve sorties of one to three attempts, some with "-0" figures
        for n in range(day % 3 + 1):
            row = attempt_row(RECENT - timedelta(days=day), touchdown=f"{2 + n}",
                              pilot="student@school.example" if day % 2 else "student2@school.example")
            rows.append(_negative_zero(row) if (day + n) % 2 else row)
    response = post(chief_client, csv_bytes(rows), dry_run=False)
    assert response.status_code == 200, response.text
    body = response.json()
    assert body["created"] == {"people": 0, "sorties": 12, "attempts": 24}

    db.expire_all()  # everything below is read back from the database, not from the import's memory
    assert audit.verify(db).ok
    assert check_signed(db, RECORD_CHECKS) == []  # what `flarebook audit verify` adds to the chain's check
    sorties = db.scalars(select(Sortie).order_by(Sortie.id)).all()
    assert len(sorties) == 12 and {s.state for s in sorties} == {"signed"}
    for sortie in sorties:
        record = json.dumps(logbook.sortie_record(sortie), sort_keys=True, separators=(",", ":"),
                            ensure_ascii=False, default=lambda value: value.isoformat())
        (signature,) = db.scalars(select(Signature).where(Signature.sortie_id == sortie.id)).all()
        assert signature.content_sha256 == hashlib.sha256(record.encode()).hexdigest()
        assert signature.meaning == "transcribed_from_records" and signature.signer_id == world.chief.id

    entries = db.scalars(select(AuditEvent).where(AuditEvent.entity.in_(["sortie", "import_batch"]))
                         .order_by(AuditEvent.seq)).all()
    expected = [(action, str(s.id)) for s in sorties for action in ("create", "sign")]
    assert [(e.action, e.entity_id) for e in entries] == expected + [("import", str(body["batch_id"]))]
    assert [e.seq for e in entries] == list(range(entries[0].seq, entries[0].seq + len(entries)))  # none between
    for created, signed in zip(entries[0:-1:2], entries[1:-1:2], strict=True):
        assert signed.after["record"] == created.after  # the content created is the content signed
        assert created.reason.startswith("transcribed from earlier records, import")
    links = db.scalars(select(ImportedRecord).where(ImportedRecord.batch_id == body["batch_id"])).all()
    assert sorted(link.row for link in links) == list(range(2, 26))
    assert {link.sortie_id for link in links} == {s.id for s in sorties}
