"""Signatures and record history in the spirit of FAA AC 120-78A (electronic signatures and records):
signing is a deliberate act by the assigned instructor (the password again, in that request), it states
what it means, names the signer and the UTC time, and holds the SHA-256 of the canonical record; a
signed record never changes, an amendment is a new version; every change is in the audit chain.
"""
import hashlib
from datetime import UTC, datetime, timedelta

from sqlalchemy import select, text

from server.db import make_engine, make_session_factory
from server.logbook import service as logbook
from server.logbook.models import MEANINGS, Signature, Sortie
from server.records import audit
from server.records.models import AuditEvent
from tests.support import PASSWORD, make_sortie

ATTEMPT = {"maneuver": "straight_in", "termination": "touchdown", "descent_kias": 65, "flare_height_ft": 90,
           "touchdown_speed_kt": 3}


def raw_rows(db, sortie_id: int) -> list:
    """The stored bytes of one version: its row, its attempts and its signatures, straight from SQL."""
    params = {"id": sortie_id}
    return [
        db.execute(text("SELECT * FROM sorties WHERE id = :id"), params).all(),
        db.execute(text("SELECT * FROM attempts WHERE sortie_id = :id ORDER BY id"), params).all(),
        db.execute(text("SELECT * FROM signatures WHERE sortie_id = :id ORDER BY id"), params).all(),
    ]


def test_the_signature_says_who_when_what_and_holds_the_records_sha256(instructor_client, world, db, settings):
    sortie = make_sortie(db, world)
    for _ in range(2):
        assert instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts", json=ATTEMPT).status_code == 201
    before = datetime.now(UTC)
    signed = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={"password": PASSWORD})
    assert signed.status_code == 200
    row = db.scalar(select(Signature).where(Signature.sortie_id == sortie.id))
    assert row.signer_id == world.instructor.id
    assert row.meaning == "instructor_certifies" and row.statement == MEANINGS["instructor_certifies"]
    assert row.signed_at.utcoffset() == timedelta(0) and before - timedelta(seconds=1) <= row.signed_at <= datetime.now(UTC)

    # Later, from a fresh connection: the record as stored still hashes (hashlib's SHA-256, FIPS 180-4)
    # to what the signature holds.
    engine = make_engine(settings.database_url)
    with make_session_factory(engine)() as fresh:
        stored = fresh.get(Sortie, sortie.id)
        canonical = audit.canonical_json(logbook.sortie_record(stored)).encode()
        assert hashlib.sha256(canonical).hexdigest() == row.content_sha256
        assert len(logbook.sortie_record(stored)["attempts"]) == 2
    engine.dispose()


def test_signing_needs_the_password_in_that_request_and_a_refusal_is_recorded(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=1)
    refused = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={"password": "guess"})
    assert refused.status_code == 422
    assert db.scalar(select(Signature).where(Signature.sortie_id == sortie.id)) is None
    last = db.scalar(select(AuditEvent).order_by(AuditEvent.seq.desc()).limit(1))
    assert (last.action, last.entity_id, last.reason) == ("sign_refused", str(sortie.id), "wrong password")
    # A session alone does not sign: no password, no signature.
    assert instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={}).status_code == 422


def test_an_amendment_leaves_the_signed_version_byte_identical(instructor_client, student_client, world, db):
    sortie = make_sortie(db, world, attempts=2, sign=True)
    assert student_client.api("POST", f"/api/v1/sorties/{sortie.id}/acknowledge").status_code == 200
    before = raw_rows(db, sortie.id)
    assert len(before[2]) == 2  # the instructor's signature and the pilot's acknowledgement

    new = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/amendments",
                                json={"reason": "Touchdown speed of attempt 2 misheard"}).json()
    assert new["state"] == "draft" and new["signatures"] == []
    attempt_id = new["attempts"][1]["id"]
    assert instructor_client.api("PATCH", f"/api/v1/attempts/{attempt_id}", json={"touchdown_speed_kt": 6}).status_code == 200
    assert instructor_client.api("POST", f"/api/v1/sorties/{new['id']}/sign", json={"password": PASSWORD}).status_code == 200

    db.expire_all()
    assert raw_rows(db, sortie.id) == before
    old_signature = db.scalar(select(Signature).where(Signature.sortie_id == sortie.id,
                                                      Signature.meaning == "instructor_certifies"))
    new_signature = db.scalar(select(Signature).where(Signature.sortie_id == new["id"]))
    assert old_signature.content_sha256 == logbook.content_hash(db.get(Sortie, sortie.id))
    assert new_signature.content_sha256 == logbook.content_hash(db.get(Sortie, new["id"]))
    assert new_signature.content_sha256 != old_signature.content_sha256
    assert audit.verify(db).ok


def test_the_history_page_shows_every_version_and_signature_and_the_check(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=2, sign=True)
    new = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/amendments",
                                json={"reason": "Wrong landing direction"}).json()
    sheet = instructor_client.get(f"/sorties/{new['id']}")
    assert f'/sorties/{new["id"]}/history"' in sheet.text
    page = instructor_client.get(f"/sorties/{new['id']}/history")
    assert page.status_code == 200
    assert "Version 1" in page.text and "Version 2" in page.text and "Wrong landing direction" in page.text
    assert "Check passed" in page.text and world.instructor.name in page.text
    assert page.text.count("</span> matches</span>") == 1  # one signature, on version 1
    assert "sign sortie" in page.text and "amend sortie" in page.text

    # Someone changes a signed attempt in the database by hand: the page says so.
    db.execute(text("UPDATE attempts SET touchdown_speed_kt = 1 WHERE sortie_id = :id"), {"id": sortie.id})
    db.commit()
    page = instructor_client.get(f"/sorties/{sortie.id}/history")
    assert "Check failed" in page.text and "does not match" in page.text
    assert "version 1: the content no longer matches the signature of Ivo Instructor" in page.text


def test_the_history_page_is_as_private_as_the_sortie(other_student_client, world, db):
    sortie = make_sortie(db, world, attempts=1, sign=True)
    answer = other_student_client.get(f"/sorties/{sortie.id}/history")
    assert answer.status_code == 404 and world.student.name not in answer.text
