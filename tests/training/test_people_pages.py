"""People from the browser: a chief pilot adds a student, gives roles, enrols them, deactivates them.

Anchor: issue 13 ("a chief pilot runs the school from the browser alone"); OWASP ASVS 5.0 V8 (only chief
pilots and administrators change accounts) and V7.4.2 (a deactivated account's sessions end at once,
common practice for account lifecycle).
"""
from datetime import date

from server.people.models import Person
from server.records.models import AuditEvent
from server.training.models import Enrolment
from tests.conftest import BrowserLikeClient, csrf_from, sign_in
from tests.support import PASSWORD, cell_texts, parsed

NEW_STUDENT = {"name": "Nia Newcomer", "email": "Nia@School.example", "password": "first-password-9",
               "roles": ["student"]}


def _program(chief_client) -> dict:
    made = chief_client.api("POST", "/api/v1/programs", json={"name": "Private syllabus (test)", "stages": [
        {"name": "Stage one", "lessons": [{"name": "First autorotations", "requirements": [
            {"maneuver": "straight_in", "termination": "power_recovery", "attempts_needed": 2}]}]}]})
    assert made.status_code == 201, made.text
    return made.json()


def test_the_people_list_shows_everyone_with_roles_and_state(chief_client, world):
    page = parsed(chief_client.get("/setup/people"))
    rows = cell_texts(page.find("table", class_="people-list"))
    by_name = {row[0]: row for row in rows}
    assert by_name["Chief Tester"][1:] == ["chief@school.example", "Chief pilot, Instructor", "In use"]
    assert by_name["Sam Student"][2] == "Student"
    assert len(rows) == 5
    # The filters are in the address, and the chosen one is marked.
    students = parsed(chief_client.get("/setup/people?role=student"))
    assert [row[0] for row in cell_texts(students.find("table"))] == ["Sam Student", "Tess Otherstudent"]
    assert students.find("a", attrs={"aria-current": "page"}, string="Students") is not None


def test_a_chief_pilot_adds_a_student_who_can_then_sign_in(app, chief_client, db, world):
    _program(chief_client)
    answer = chief_client.form_post("/setup/people/new", NEW_STUDENT)
    assert answer.status_code == 303
    added = db.query(Person).filter_by(email="nia@school.example").one()
    assert added.roles == ["student"] and added.active
    assert answer.headers["location"].endswith(f"/setup/people/{added.id}?added=1")
    page = parsed(chief_client.get(answer.headers["location"]))
    assert page.find("h1").get_text() == "Nia Newcomer"
    assert "can now sign in as nia@school.example" in page.find(class_="notice").get_text()
    # The page offers the next step: enrolment, the password reset and the person's records.
    assert page.find("form", action=f"http://testserver/setup/people/{added.id}/enrol") is not None
    assert page.find("a", href=f"/setup/people/{added.id}/reset-password") is not None
    sign_in(app, "nia@school.example", "first-password-9")  # signs in through the real form
    created = db.query(AuditEvent).filter_by(entity="person", entity_id=str(added.id), action="create").one()
    assert created.actor_id == world.chief.id


def test_a_refused_addition_keeps_what_was_typed_and_says_why(chief_client, db, world):
    answer = chief_client.form_post("/setup/people/new", NEW_STUDENT | {"email": world.student.email})
    assert answer.status_code == 409
    page = parsed(answer)
    assert page.find(role="alert").get_text(" ", strip=True).endswith(f"Someone already signs in as {world.student.email}.")
    assert page.find("input", attrs={"name": "name"})["value"] == "Nia Newcomer"
    assert page.find("input", attrs={"name": "roles", "value": "student"}).has_attr("checked")
    short = chief_client.form_post("/setup/people/new", NEW_STUDENT | {"password": "short"})
    assert short.status_code == 422 and "at least 8 characters" in parsed(short).find(role="alert").get_text()
    no_role = chief_client.form_post("/setup/people/new", {k: v for k, v in NEW_STUDENT.items() if k != "roles"})
    assert no_role.status_code == 422
    assert db.query(Person).filter_by(name="Nia Newcomer").count() == 0


def test_a_new_student_is_enrolled_from_their_page(chief_client, db, world):
    program = _program(chief_client)
    answer = chief_client.form_post(f"/setup/people/{world.student.id}/enrol", {
        "program_id": program["id"], "instructor_id": world.instructor.id, "started_on": "2026-11-02"})
    assert answer.status_code == 303
    enrolment = db.query(Enrolment).filter_by(student_id=world.student.id, program_id=program["id"]).one()
    assert (enrolment.program_id, enrolment.instructor_id, enrolment.started_on) == (
        program["id"], world.instructor.id, date(2026, 11, 2))
    page = parsed(chief_client.get(f"/setup/people/{world.student.id}"))
    rows = cell_texts(page.find("section", attrs={"aria-labelledby": "enrol-h"}).find("table"))
    # The new enrolment is active; the test school's own enrolment of the student has ended.
    without_check_column = [row[:2] + row[3:] for row in rows]
    assert ["Private syllabus (test)", "Ivo Instructor", "02 Nov 2026", "Active"] in without_check_column
    assert all(row[4] == "Ended" for row in rows if row[0] != "Private syllabus (test)")
    # A program that does not exist is refused with a reason, and nothing changes.
    bad = chief_client.form_post(f"/setup/people/{world.student.id}/enrol", {"program_id": "999",
                                                                             "started_on": "2026-11-02"})
    assert bad.status_code == 404 and parsed(bad).find(role="alert") is not None
    assert db.query(Enrolment).filter_by(student_id=world.student.id).count() == 2  # the test school's own and the new one


def test_a_check_instructor_is_assigned_from_the_students_page(chief_client, other_instructor_client, db, world):
    program = _program(chief_client)
    chief_client.form_post(f"/setup/people/{world.student.id}/enrol", {
        "program_id": program["id"], "instructor_id": world.instructor.id, "started_on": "2026-11-02"})
    enrolment = db.query(Enrolment).filter_by(student_id=world.student.id, active=True).one()
    assert other_instructor_client.get(f"/people/{world.student.id}/progress").status_code == 404
    usual = chief_client.form_post(f"/setup/people/{world.student.id}/enrolments/{enrolment.id}/check-instructor",
                                   {"check_instructor_id": world.instructor.id})
    assert usual.status_code == 422 and "usual instructor" in parsed(usual).find(role="alert").get_text()
    answer = chief_client.form_post(f"/setup/people/{world.student.id}/enrolments/{enrolment.id}/check-instructor",
                                    {"check_instructor_id": world.other_instructor.id})
    assert answer.status_code == 303
    page = parsed(chief_client.get(f"/setup/people/{world.student.id}"))
    chosen = page.find("select", attrs={"name": "check_instructor_id", "id": f"c-{enrolment.id}"})
    assert chosen.find("option", selected=True).get_text() == world.other_instructor.name
    assert other_instructor_client.get(f"/people/{world.student.id}/progress").status_code == 200


def test_roles_and_name_are_edited(chief_client, db, world):
    answer = chief_client.form_post(f"/setup/people/{world.instructor.id}/edit",
                                    {"name": "Ivo Instructor-Hale", "roles": ["instructor", "chief_pilot"]})
    assert answer.status_code == 303
    db.expire_all()
    changed = db.get(Person, world.instructor.id)
    assert (changed.name, changed.roles) == ("Ivo Instructor-Hale", ["chief_pilot", "instructor"])
    form = parsed(chief_client.get(f"/setup/people/{world.instructor.id}/edit"))
    checked = {i["value"] for i in form.find_all("input", attrs={"name": "roles"}) if i.has_attr("checked")}
    assert checked == {"instructor", "chief_pilot"}


def test_a_chief_pilot_cannot_lock_themselves_out(chief_client, db, world):
    demoted = chief_client.form_post(f"/setup/people/{world.chief.id}/edit", {"name": "Chief", "roles": ["instructor"]})
    assert demoted.status_code == 422 and "lock yourself out" in parsed(demoted).find(role="alert").get_text()
    deactivated = chief_client.form_post(f"/setup/people/{world.chief.id}/deactivate")
    assert deactivated.status_code == 409
    db.expire_all()
    assert db.get(Person, world.chief.id).active and "chief_pilot" in db.get(Person, world.chief.id).roles


def test_deactivating_ends_their_sessions_and_keeps_their_records(app, chief_client, db, world):
    student = sign_in(app, world.student.email)
    assert student.get("/").status_code == 200
    assert chief_client.form_post(f"/setup/people/{world.student.id}/deactivate").status_code == 303
    assert student.get("/").status_code == 303  # sent to sign in: the session ended
    again = BrowserLikeClient(app, base_url="http://testserver", follow_redirects=False)
    refused = again.post("/signin", data={"email": world.student.email, "password": PASSWORD,
                                          "csrf_token": csrf_from(again.get("/signin").text)})
    assert refused.status_code == 401
    page = parsed(chief_client.get("/setup/people?show=inactive"))
    assert cell_texts(page.find("table"))[0][::3] == ["Sam Student", "Deactivated"]
    assert parsed(chief_client.get("/setup/people")).find("a", string="Sam Student") is None
    assert chief_client.form_post(f"/setup/people/{world.student.id}/reactivate").status_code == 303
    sign_in(app, world.student.email, PASSWORD)


def test_only_chief_pilots_and_admins_reach_people_setup(instructor_client, student_client, world):
    for client in (instructor_client, student_client):
        assert client.get("/setup/people").status_code == 403
        assert client.form_post("/setup/people/new", NEW_STUDENT).status_code == 403
        assert client.form_post(f"/setup/people/{world.other_student.id}/deactivate").status_code == 403
