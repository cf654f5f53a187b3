"""The sortie and attempt API: what a script or the tablet sees, including every refusal."""
from sqlalchemy import func, select

from server.logbook.models import Attempt, Signature, Sortie
from server.records.models import AuditEvent
from tests.support import PASSWORD, make_sortie

GOOD_ATTEMPT = {
    "maneuver": "straight_in", "termination": "touchdown", "landing_dir_deg": 270, "entry_height_ft": 600,
    "entry_kias": 65, "descent_kias": 65, "nr_low_pct": 95, "nr_high_pct": 104, "flare_height_ft": 90,
    "touchdown_speed_kt": 3, "point_error_ft": 20, "heading_error_deg": 2,
}


def counts(db) -> tuple[int, int, int]:
    db.expire_all()
    return tuple(db.scalar(select(func.count()).select_from(t)) for t in (Sortie, Attempt, AuditEvent))


def new_sortie(client, world, **extra):
    body = {"flown_at": "2026-11-20T10:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.student.id,
            "site_id": world.site.id, "oat_c": 30, "altimeter_hpa": 1013.25, "wind_dir_deg": 270, "wind_kt": 12,
            **extra}
    return client.api("POST", "/api/v1/sorties", json=body)


def test_instructor_logs_three_attempts_and_signs(instructor_client, world):
    created = new_sortie(instructor_client, world)
    assert created.status_code == 201, created.text
    sortie = created.json()
    assert sortie["state"] == "draft"
    # 500 ft site at 30 °C on a standard-pressure day: hot, so density altitude well above the field.
    assert sortie["pressure_altitude_ft"] == 500
    assert sortie["density_altitude_ft"] > 2000
    for _ in range(3):
        answer = instructor_client.api("POST", f"/api/v1/sorties/{sortie['id']}/attempts", json=GOOD_ATTEMPT)
        assert answer.status_code == 201, answer.text
        attempt = answer.json()
        assert attempt["score"] is not None and set(attempt["parts"]) >= {"touchdown_speed", "flare_height"}
        assert attempt["headwind_kt"] == 12.0 and attempt["crosswind_kt"] == 0.0  # wind straight down the landing direction
    signed = instructor_client.api("POST", f"/api/v1/sorties/{sortie['id']}/sign", json={"password": PASSWORD})
    assert signed.status_code == 200, signed.text
    body = signed.json()
    assert body["state"] == "signed" and len(body["attempts"]) == 3
    assert body["signatures"][0]["signer_id"] == world.instructor.id
    assert len(body["signatures"][0]["content_sha256"]) == 64


def test_weight_in_kg_and_altimeter_in_inhg_are_converted(instructor_client, world):
    body = new_sortie(instructor_client, world, altimeter_hpa=None, altimeter_inhg=29.92, takeoff_weight_kg=600).json()
    # 29.92 inHg is the standard setting: pressure altitude equals elevation (FAA PHAK, common practice).
    assert abs(body["pressure_altitude_ft"] - 500) <= 2
    # 1 lb = 0.45359237 kg exactly (international yard and pound agreement, 1959).
    assert abs(body["takeoff_weight_lb"] - 600 / 0.45359237) < 0.1


def test_wrong_password_leaves_the_sortie_unsigned(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=1)
    answer = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={"password": "not-it"})
    assert answer.status_code == 422
    db.expire_all()
    assert db.get(Sortie, sortie.id).state == "draft"
    assert db.scalar(select(func.count()).select_from(Signature)) == 0


def test_only_the_assigned_instructor_signs(other_instructor_client, chief_client, world, db):
    sortie = make_sortie(db, world, attempts=1)
    assert chief_client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={"password": PASSWORD}).status_code == 403
    db.expire_all()
    assert db.get(Sortie, sortie.id).state == "draft"


def test_a_signed_sortie_cannot_be_edited_without_an_amendment(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=2, sign=True)
    attempt_id = sortie.attempts[0].id
    before = counts(db)
    refused = [
        instructor_client.api("PATCH", f"/api/v1/sorties/{sortie.id}", json={"oat_c": 5}),
        instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts", json=GOOD_ATTEMPT),
        instructor_client.api("PATCH", f"/api/v1/attempts/{attempt_id}", json={"flare_height_ft": 50}),
        instructor_client.api("DELETE", f"/api/v1/attempts/{attempt_id}"),
    ]
    assert [r.status_code for r in refused] == [409] * 4
    assert "amendment" in refused[0].json()["detail"]
    assert counts(db) == before


def test_an_amendment_keeps_both_versions_and_the_signature(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=2, sign=True)
    original = instructor_client.api("GET", f"/api/v1/sorties/{sortie.id}").json()
    amended = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/amendments",
                                    json={"reason": "Flare height on attempt 1 was misread"})
    assert amended.status_code == 201
    new = amended.json()
    assert new["version"] == 2 and new["state"] == "draft" and new["supersedes_id"] == sortie.id
    patched = instructor_client.api("PATCH", f"/api/v1/attempts/{new['attempts'][0]['id']}", json={"flare_height_ft": 60})
    assert patched.status_code == 200 and patched.json()["flare_height_ft"] == 60
    signed = instructor_client.api("POST", f"/api/v1/sorties/{new['id']}/sign", json={"password": PASSWORD}).json()
    assert signed["state"] == "signed"
    old_now = instructor_client.api("GET", f"/api/v1/sorties/{sortie.id}").json()
    assert old_now["state"] == "amended" and old_now["superseded_by_id"] == new["id"]
    # The old version's content and signature are exactly as they were.
    assert old_now["attempts"] == original["attempts"]
    assert old_now["signatures"] == original["signatures"]


def test_out_of_range_numbers_are_refused_with_a_message_and_nothing_changes(instructor_client, world, db):
    sortie = make_sortie(db, world)
    before = counts(db)
    for field, value in (("entry_height_ft", -50), ("nr_low_pct", 300), ("touchdown_speed_kt", -1)):
        answer = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts",
                                       json={**GOOD_ATTEMPT, field: value})
        assert answer.status_code == 422
        assert field in answer.json()["detail"]
    assert instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts",
                                 json={**GOOD_ATTEMPT, "maneuver": "loop"}).status_code == 422
    assert counts(db) == before


def test_a_student_cannot_see_another_students_sortie(student_client, other_student_client, world, db):
    sortie = make_sortie(db, world, attempts=1)
    assert student_client.api("GET", f"/api/v1/sorties/{sortie.id}").status_code == 200
    hidden = other_student_client.api("GET", f"/api/v1/sorties/{sortie.id}")
    assert hidden.status_code == 404
    assert world.student.name not in hidden.text
    assert other_student_client.api("GET", f"/api/v1/attempts/{sortie.attempts[0].id}").status_code == 404
    assert other_student_client.api("GET", "/api/v1/sorties").json() == []


def test_students_cannot_start_sorties(student_client, world, db):
    before = counts(db)
    assert new_sortie(student_client, world).status_code == 403
    sorties, attempts, audit_rows = counts(db)
    # Nothing is created; the refusal itself is kept in the audit chain.
    assert (sorties, attempts, audit_rows) == (before[0], before[1], before[2] + 1)
    refusal = db.scalar(select(AuditEvent).order_by(AuditEvent.seq.desc()).limit(1))
    assert refusal.action == "access_refused" and refusal.actor_id == world.student.id


def test_the_pilot_acknowledges_a_signed_sortie(student_client, world, db):
    sortie = make_sortie(db, world, attempts=1, sign=True)
    answer = student_client.api("POST", f"/api/v1/sorties/{sortie.id}/acknowledge")
    assert answer.status_code == 200 and answer.json()["state"] == "acknowledged"
    assert student_client.api("POST", f"/api/v1/sorties/{sortie.id}/acknowledge").status_code == 409


def test_openapi_lists_the_design_routes(anonymous):
    paths = anonymous.get("/openapi.json").json()["paths"]
    for route in ("/api/v1/me", "/api/v1/people", "/api/v1/types", "/api/v1/aircraft", "/api/v1/sites",
                  "/api/v1/conditions", "/api/v1/sorties", "/api/v1/sorties/{sortie_id}/sign",
                  "/api/v1/sorties/{sortie_id}/attempts", "/api/v1/attempts/{attempt_id}"):
        assert route in paths
