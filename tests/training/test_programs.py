"""Programs: a chief pilot writes the syllabus, enrols students; lessons follow the records; stage checks."""
from sqlalchemy import select

from server.records.models import AuditEvent
from tests.progress.helpers import GOOD, POOR, fly
from tests.support import PASSWORD, WORLD_PROGRAM

SYLLABUS = {
    "name": "Test private syllabus", "level": "private", "description": "Invented for the tests.",
    "stages": [
        {"name": "Stage 1", "lessons": [
            {"name": "Straight-in to touchdown",
             "requirements": [{"maneuver": "straight_in", "termination": "touchdown", "attempts_needed": 2}]},
            {"name": "Power recoveries",
             "requirements": [{"maneuver": "straight_in", "termination": "power_recovery", "attempts_needed": 1}]},
        ]},
        {"name": "Stage 2", "lessons": [
            {"name": "Hovering", "requirements": [{"maneuver": "hovering", "termination": "to_hover"}]},
        ]},
    ],
}


def _create(client) -> dict:
    answer = client.api("POST", "/api/v1/programs", json=SYLLABUS)
    assert answer.status_code == 201, answer.text
    return answer.json()


def _enrol(client, program_id, world, started_on="2026-08-01") -> dict:
    answer = client.api("POST", f"/api/v1/programs/{program_id}/enrolments", json={
        "student_id": world.student.id, "instructor_id": world.instructor.id, "started_on": started_on})
    assert answer.status_code == 201, answer.text
    return answer.json()


def test_chief_pilot_writes_a_syllabus_everyone_can_read_it(chief_client, student_client):
    program = _create(chief_client)
    assert [s["name"] for s in program["stages"]] == ["Stage 1", "Stage 2"]
    assert program["stages"][0]["lessons"][0]["requirements"][0]["attempts_needed"] == 2
    assert program["stages"][1]["lessons"][0]["requirements"][0]["attempts_needed"] == 3  # the default
    listed = student_client.get("/api/v1/programs").json()
    assert [p["name"] for p in listed if p["name"] != WORLD_PROGRAM] == ["Test private syllabus"]


def test_only_chief_pilots_write_syllabi(instructor_client, student_client):
    for client in (instructor_client, student_client):
        answer = client.api("POST", "/api/v1/programs", json=SYLLABUS)
        assert answer.status_code == 403 and "chief pilot" in answer.json()["detail"]


def test_bad_syllabus_is_refused_with_the_field_named(chief_client):
    bad = SYLLABUS | {"stages": [{"name": "S", "lessons": [{"name": "L", "requirements": [
        {"maneuver": "straight_in", "termination": "touchdown", "attempts_needed": 0}]}]}]}
    answer = chief_client.api("POST", "/api/v1/programs", json=bad)
    assert answer.status_code == 422 and "attempts_needed" in answer.json()["detail"]
    assert [p["name"] for p in chief_client.get("/api/v1/programs").json()] == [WORLD_PROGRAM]


def test_editing_keeps_ids_adds_and_removes(chief_client):
    program = _create(chief_client)
    stage1, stage2 = program["stages"]
    edited = {**SYLLABUS, "stages": [
        {"id": stage2["id"], "name": "Stage 2 (now first)", "lessons": [
            {"id": l["id"], "name": l["name"], "requirements": l["requirements"]} for l in stage2["lessons"]]},
        {"name": "Stage 3", "lessons": [{"name": "360° turns"}]},
    ]}
    answer = chief_client.api("PUT", f"/api/v1/programs/{program['id']}", json=edited)
    assert answer.status_code == 200, answer.text
    stages = answer.json()["stages"]
    assert [(s["name"], s["position"]) for s in stages] == [("Stage 2 (now first)", 1), ("Stage 3", 2)]
    assert stages[0]["id"] == stage2["id"] and stages[0]["lessons"][0]["id"] == stage2["lessons"][0]["id"]
    assert stage1["id"] not in [s["id"] for s in stages]


def test_lessons_follow_signed_records_and_an_instructor_confirms(db, world, chief_client, instructor_client,
                                                                   student_client):
    program = _create(chief_client)
    enrolment = _enrol(chief_client, program["id"], world)
    lesson = program["stages"][0]["lessons"][0]
    fly(db, world, [GOOD, POOR], day=0)
    fly(db, world, [GOOD], day=1, sign=False)  # a draft does not count yet
    progress = student_client.get(f"/api/v1/people/{world.student.id}/program").json()
    first = progress["stages"][0]["lessons"][0]
    assert first["requirements"][0]["attempts_counted"] == 1 and not first["attempts_met"]
    early = instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/lessons/{lesson['id']}/confirm")
    assert early.status_code == 409
    assert "1 more straight-in autorotation (full touchdown) inside every tolerance" in early.json()["detail"]
    fly(db, world, [GOOD], day=2)
    done = instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/lessons/{lesson['id']}/confirm")
    assert done.status_code == 200, done.text
    first = done.json()["stages"][0]["lessons"][0]
    assert first["attempts_met"] and first["confirmed_by_id"] == world.instructor.id
    assert done.json()["current_lesson_id"] == program["stages"][0]["lessons"][1]["id"]
    # A student cannot sign off their own lesson.
    second = program["stages"][0]["lessons"][1]
    fly(db, world, [GOOD | {"termination": "power_recovery"}], day=3)
    own = student_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/lessons/{second['id']}/confirm")
    assert own.status_code == 403


def test_a_lesson_signed_off_cannot_be_removed_from_the_syllabus(db, world, chief_client, instructor_client):
    program = _create(chief_client)
    enrolment = _enrol(chief_client, program["id"], world)
    lesson = program["stages"][0]["lessons"][0]
    fly(db, world, [GOOD, GOOD], day=0)
    instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/lessons/{lesson['id']}/confirm")
    without = {**SYLLABUS, "stages": [{"id": program["stages"][1]["id"], "name": "Stage 2", "lessons": []}]}
    answer = chief_client.api("PUT", f"/api/v1/programs/{program['id']}", json=without)
    assert answer.status_code == 409 and "signed off" in answer.json()["detail"]


def _confirm_stage_one(db, world, chief_client, instructor_client, *, check_instructor=None):
    program = _create(chief_client)
    enrolment = _enrol(chief_client, program["id"], world)
    if check_instructor is not None:
        assigned = chief_client.api("PUT", f"/api/v1/enrolments/{enrolment['id']}/check-instructor",
                                    json={"check_instructor_id": check_instructor.id})
        assert assigned.status_code == 200 and assigned.json()["check_instructor_id"] == check_instructor.id
    fly(db, world, [GOOD, GOOD, GOOD | {"termination": "power_recovery"}], day=0)
    for lesson in program["stages"][0]["lessons"]:
        answer = instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/lessons/{lesson['id']}/confirm")
        assert answer.status_code == 200, answer.text
    return program, enrolment


def test_the_usual_instructor_cannot_sign_the_stage_check(db, world, chief_client, instructor_client):
    program, enrolment = _confirm_stage_one(db, world, chief_client, instructor_client)
    answer = instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/stage-checks", json={
        "stage_id": program["stages"][0]["id"], "passed": True, "password": PASSWORD})
    assert answer.status_code == 403
    assert "usual instructor" in answer.json()["detail"]


def test_an_instructor_nobody_assigned_can_neither_find_nor_sign_the_stage_check(db, world, chief_client,
                                                                                 instructor_client,
                                                                                 other_instructor_client):
    program, enrolment = _confirm_stage_one(db, world, chief_client, instructor_client)
    answer = other_instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/stage-checks", json={
        "stage_id": program["stages"][0]["id"], "passed": True, "password": PASSWORD})
    assert answer.status_code == 404
    assert other_instructor_client.get(f"/people/{world.student.id}/progress").status_code == 404


def test_the_check_instructor_sees_the_file_they_check_and_no_longer_once_unassigned(
        db, world, chief_client, instructor_client, other_instructor_client):
    """The issue's step 6: signing a stage check and reading the progress file follow one rule."""
    program, enrolment = _confirm_stage_one(db, world, chief_client, instructor_client,
                                            check_instructor=world.other_instructor)
    page = other_instructor_client.get(f"/people/{world.student.id}/progress")
    assert page.status_code == 200 and "Sign the stage check" in page.text
    signed = other_instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/stage-checks", json={
        "stage_id": program["stages"][0]["id"], "passed": True, "password": PASSWORD})
    assert signed.status_code == 201, signed.text
    assert other_instructor_client.get(f"/people/{world.student.id}/progress").status_code == 200
    cleared = chief_client.api("PUT", f"/api/v1/enrolments/{enrolment['id']}/check-instructor",
                               json={"check_instructor_id": None})
    assert cleared.status_code == 200 and cleared.json()["check_instructor_id"] is None
    assert other_instructor_client.get(f"/people/{world.student.id}/progress").status_code == 404


def test_the_usual_instructor_cannot_be_named_check_instructor(world, chief_client, instructor_client):
    program = _create(chief_client)
    enrolment = _enrol(chief_client, program["id"], world)
    answer = chief_client.api("PUT", f"/api/v1/enrolments/{enrolment['id']}/check-instructor",
                              json={"check_instructor_id": world.instructor.id})
    assert answer.status_code == 422 and "usual instructor" in answer.json()["detail"]
    by_instructor = instructor_client.api("PUT", f"/api/v1/enrolments/{enrolment['id']}/check-instructor",
                                          json={"check_instructor_id": None})
    assert by_instructor.status_code == 403


def test_a_check_instructor_or_chief_pilot_signs_the_stage_check(db, world, chief_client, instructor_client,
                                                                 other_instructor_client, student_client):
    program, enrolment = _confirm_stage_one(db, world, chief_client, instructor_client,
                                            check_instructor=world.other_instructor)
    url = f"/api/v1/enrolments/{enrolment['id']}/stage-checks"
    stage_id = program["stages"][0]["id"]
    wrong = other_instructor_client.api("POST", url, json={"stage_id": stage_id, "passed": True, "password": "nope"})
    assert wrong.status_code == 422 and "password" in wrong.json()["detail"]
    signed = other_instructor_client.api("POST", url, json={"stage_id": stage_id, "passed": True,
                                                            "remarks": "Good flares.", "password": PASSWORD})
    assert signed.status_code == 201, signed.text
    assert signed.json()["checker_id"] == world.other_instructor.id
    progress = student_client.get(f"/api/v1/people/{world.student.id}/program").json()
    assert progress["stages"][0]["check_passed"] and progress["current_stage_id"] == program["stages"][1]["id"]
    # A pass needs every lesson of the stage confirmed first.
    early = chief_client.api("POST", url, json={"stage_id": program["stages"][1]["id"], "passed": True,
                                                "password": PASSWORD})
    assert early.status_code == 409 and "Hovering" in early.json()["detail"]


def test_a_wrong_password_on_the_stage_check_api_stays_in_the_audit_chain(db, world, chief_client, instructor_client,
                                                                          other_instructor_client):
    program, enrolment = _confirm_stage_one(db, world, chief_client, instructor_client,
                                            check_instructor=world.other_instructor)
    wrong = other_instructor_client.api("POST", f"/api/v1/enrolments/{enrolment['id']}/stage-checks", json={
        "stage_id": program["stages"][0]["id"], "passed": True, "password": "nope"})
    assert wrong.status_code == 422
    db.expire_all()
    last = db.scalar(select(AuditEvent).order_by(AuditEvent.seq.desc()).limit(1))
    assert (last.action, last.actor_id, last.entity_id, last.reason) == (
        "sign_refused", world.other_instructor.id, str(enrolment["id"]), "wrong password")


def test_setup_page_adds_a_stage_and_a_requirement(chief_client, student_client):
    program = _create(chief_client)
    page_url = f"/programs/{program['id']}"
    assert chief_client.form_post(f"{page_url}/edit", {"action": "add_stage", "name": "Stage 3: check ride"}
                                  ).status_code == 303
    stage3 = chief_client.get(f"/api/v1/programs/{program['id']}").json()["stages"][2]
    chief_client.form_post(f"{page_url}/edit", {"action": "add_lesson", "stage_id": stage3["id"], "name": "Mock check"})
    lesson = chief_client.get(f"/api/v1/programs/{program['id']}").json()["stages"][2]["lessons"][0]
    answer = chief_client.form_post(f"{page_url}/edit", {
        "action": "add_requirement", "stage_id": stage3["id"], "lesson_id": lesson["id"], "maneuver": "turn_180",
        "termination": "touchdown", "attempts_needed": "4"})
    assert answer.status_code == 303
    page = student_client.get(page_url).text
    assert "Stage 3: check ride" in page and "4 × 180° turn, full touchdown inside every tolerance" in page
    assert "Add a stage" not in page  # students read the syllabus, they do not edit it
    refused = chief_client.form_post(f"{page_url}/edit", {
        "action": "add_requirement", "stage_id": stage3["id"], "lesson_id": lesson["id"], "maneuver": "turn_180",
        "termination": "touchdown", "attempts_needed": "0"})
    assert refused.status_code == 422 and "attempts_needed" in refused.text
