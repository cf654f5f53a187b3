"""Every create, edit, sign, sign-in and refused access writes one audit entry, in the same transaction
as the change (a change that fails leaves no entry), chained by hash (DESIGN section 3)."""
from sqlalchemy import select

from server.records import audit
from server.records.models import AuditEvent
from tests.conftest import sign_in
from tests.support import PASSWORD, make_sortie

ATTEMPT = {"maneuver": "turn_180", "termination": "power_recovery", "descent_kias": 62}


def new_rows(db, after_seq: int) -> list[tuple]:
    db.expire_all()
    return [(r.action, r.entity) for r in db.scalars(select(AuditEvent).where(AuditEvent.seq > after_seq)
                                                     .order_by(AuditEvent.seq))]


def last_seq(db) -> int:
    return audit.current_head(db).seq


def test_each_change_writes_one_entry(instructor_client, world, db):
    start = last_seq(db)
    sortie = instructor_client.api("POST", "/api/v1/sorties", json={
        "flown_at": "2026-11-21T09:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.student.id,
        "site_id": world.site.id}).json()
    attempt = instructor_client.api("POST", f"/api/v1/sorties/{sortie['id']}/attempts", json=ATTEMPT).json()
    instructor_client.api("PATCH", f"/api/v1/attempts/{attempt['id']}", json={"descent_kias": 64})
    instructor_client.api("PATCH", f"/api/v1/sorties/{sortie['id']}", json={"oat_c": 12})
    instructor_client.api("POST", f"/api/v1/sorties/{sortie['id']}/sign", json={"password": PASSWORD})
    assert new_rows(db, start) == [("create", "sortie"), ("create", "attempt"), ("edit", "attempt"),
                                   ("edit", "sortie"), ("sign", "sortie")]
    assert audit.verify(db).ok


def test_sign_in_and_a_refused_sign_in_are_recorded(app, world, db, anonymous):
    start = last_seq(db)
    sign_in(app, world.student.email)
    page = anonymous.get("/signin")
    token = page.text.split('name="csrf_token" value="')[1].split('"')[0]
    anonymous.post("/signin", data={"email": world.student.email, "password": "wrong", "csrf_token": token})
    assert new_rows(db, start) == [("sign_in", "person"), ("sign_in_refused", "person")]


def test_refused_accesses_are_recorded_with_who_and_what(other_student_client, student_client, world, db):
    sortie = make_sortie(db, world, attempts=1)
    start = last_seq(db)
    assert other_student_client.api("GET", f"/api/v1/sorties/{sortie.id}").status_code == 404
    assert other_student_client.get(f"/sorties/{sortie.id}").status_code == 404
    assert student_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts", json=ATTEMPT).status_code == 403
    db.expire_all()
    rows = db.scalars(select(AuditEvent).where(AuditEvent.seq > start).order_by(AuditEvent.seq)).all()
    assert [(r.action, r.actor_id, r.entity, r.entity_id, r.after["status"]) for r in rows] == [
        ("access_refused", world.other_student.id, "sortie", str(sortie.id), 404),
        ("access_refused", world.other_student.id, "sortie", str(sortie.id), 404),
        ("access_refused", world.student.id, "sortie", str(sortie.id), 403),
    ]
    # The route's pattern, not the path as sent: a path can carry a secret (the id is in entity_id).
    assert rows[0].after["path"] == "/api/v1/sorties/{sortie_id}"
    assert audit.verify(db).ok


def test_a_change_that_fails_leaves_no_entry(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=1, sign=True)
    start = last_seq(db)
    # Refused as a conflict (409) after the service has looked at it: nothing, not even half an entry.
    assert instructor_client.api("PATCH", f"/api/v1/sorties/{sortie.id}", json={"oat_c": 3}).status_code == 409
    assert new_rows(db, start) == []
