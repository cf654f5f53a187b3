"""Fields a caller may not set are refused with a clear 422 and change nothing.

Anchor: OWASP ASVS 5.0 level 2, V15.3.3 (mass assignment: only the fields meant to be set are bound).
"""
import pytest
from sqlalchemy import func, select

from server.logbook.models import Sortie
from server.people.models import Person
from server.records.models import AuditEvent
from tests.support import make_sortie


@pytest.fixture
def sortie(db, world):
    return make_sortie(db, world, attempts=1)


# pilot_id is no longer among them: issue 12 lets a draft's pilot be corrected (it counts nowhere until
# signed); tests/logbook/test_sheet_forms.py checks that change, and that a signed sortie refuses it.
@pytest.mark.parametrize("field, value", [
    ("signed_by", "chief"), ("instructor_id", "other_instructor"),
    ("state", "signed"), ("density_altitude_ft", 0), ("created_by_id", "chief"),
])
def test_patching_a_sortie_with_a_field_it_does_not_take_is_refused(instructor_client, db, world, sortie,
                                                                     field, value):
    if isinstance(value, str) and hasattr(world, value):
        value = getattr(world, value).id
    before = db.scalar(select(func.count()).select_from(AuditEvent))
    answer = instructor_client.api("PATCH", f"/api/v1/sorties/{sortie.id}", json={"remarks": "changed", field: value})
    assert answer.status_code == 422
    body = answer.json()
    assert any(error["field"] == field for error in body["errors"]), body
    assert field in body["detail"] and "not permitted" in body["detail"].lower()
    db.expire_all()
    stored = db.get(Sortie, sortie.id)
    assert stored.pilot_id == world.student.id and stored.remarks == "" and stored.state == "draft"
    assert db.scalar(select(func.count()).select_from(AuditEvent)) == before


@pytest.mark.parametrize("field, value", [
    ("score", 100), ("flags", []), ("sortie_id", 1), ("pilot_id", 1), ("satisfactory", True), ("signed_by", 1),
])
def test_patching_an_attempt_with_a_derived_or_owner_field_is_refused(instructor_client, db, sortie, field, value):
    attempt = sortie.attempts[0]
    answer = instructor_client.api("PATCH", f"/api/v1/attempts/{attempt.id}", json={"remarks": "x", field: value})
    assert answer.status_code == 422
    assert any(error["field"] == field for error in answer.json()["errors"])
    db.expire_all()
    assert sortie.attempts[0].remarks == ""


@pytest.mark.parametrize("field, value", [("email", "taken-over@school.example"), ("password_hash", "x"),
                                          ("id", 999)])
def test_patching_a_person_with_a_field_it_does_not_take_is_refused(chief_client, db, world, field, value):
    answer = chief_client.api("PATCH", f"/api/v1/people/{world.student.id}", json={"name": "Renamed", field: value})
    assert answer.status_code == 422
    assert any(error["field"] == field for error in answer.json()["errors"])
    db.expire_all()
    stored = db.get(Person, world.student.id)
    assert stored.email == world.student.email and stored.name == world.student.name


def test_creating_a_sortie_cannot_smuggle_a_signature(instructor_client, world):
    answer = instructor_client.api("POST", "/api/v1/sorties", json={
        "flown_at": "2026-11-20T10:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.student.id,
        "site_id": world.site.id, "state": "signed"})
    assert answer.status_code == 422
    assert any(error["field"] == "state" for error in answer.json()["errors"])
