"""Sign-in, sign-out, CSRF, roles and API tokens, as a person at the browser or a script would meet them."""
from fastapi.testclient import TestClient
from sqlalchemy import func, select

from server.people import service as people
from server.people.models import UserSession
from server.records.models import AuditEvent
from tests.conftest import csrf_from, sign_in
from tests.support import PASSWORD


def test_pages_need_a_sign_in(anonymous, world):
    answer = anonymous.get("/")
    assert answer.status_code == 303 and answer.headers["location"] == "/signin"


def test_sign_in_then_home_greets_the_person(instructor_client, world):
    page = instructor_client.get("/")
    assert page.status_code == 200
    assert f"Hello, {world.instructor.name}" in page.text


def test_wrong_password_is_refused_without_saying_whether_the_account_exists(anonymous, world, db):
    page = anonymous.get("/signin")
    token = csrf_from(page.text)
    wrong = anonymous.post("/signin", data={"email": world.student.email, "password": "nope-nope", "csrf_token": token})
    unknown = anonymous.post("/signin", data={"email": "nobody@school.example", "password": "nope-nope",
                                              "csrf_token": token})
    assert wrong.status_code == unknown.status_code == 401
    assert "do not match an active account" in wrong.text
    assert "do not match an active account" in unknown.text
    signed_in = db.scalar(select(func.count()).select_from(UserSession).where(UserSession.person_id.is_not(None)))
    assert signed_in == 0
    assert db.scalar(select(func.count()).select_from(AuditEvent).where(AuditEvent.action == "sign_in_refused")) == 2


def test_sign_in_without_the_csrf_token_is_refused(anonymous, world, db):
    anonymous.get("/signin")
    answer = anonymous.post("/signin", data={"email": world.student.email, "password": PASSWORD})
    assert answer.status_code == 403
    assert "Reload the page" in answer.text
    assert db.scalar(select(func.count()).select_from(UserSession).where(UserSession.person_id.is_not(None))) == 0


def test_a_forged_form_changes_nothing(instructor_client, world, db):
    before = db.scalar(select(func.count()).select_from(AuditEvent))
    forged = instructor_client.post("/sorties/new", data={"pilot_id": world.student.id, "csrf_token": "forged"})
    assert forged.status_code == 403
    # Nothing changes but the audit chain, which keeps the refusal (and who was refused).
    rows = db.scalars(select(AuditEvent).where(AuditEvent.seq > before)).all()
    assert [(r.action, r.actor_id) for r in rows] == [("access_refused", world.instructor.id)]


def test_sign_in_gives_a_new_session_id_and_an_http_only_cookie(anonymous, world):
    first = anonymous.get("/signin")
    pre_sign_in = anonymous.cookies.get("flarebook")
    cookie = first.headers["set-cookie"].lower()
    assert "httponly" in cookie and "samesite=lax" in cookie
    answer = anonymous.post("/signin", data={"email": world.student.email, "password": PASSWORD,
                                             "csrf_token": csrf_from(first.text)})
    assert answer.status_code == 303
    assert anonymous.cookies.get("flarebook") not in (None, pre_sign_in)


def test_sign_out_ends_the_session_on_the_server(app, world):
    client = sign_in(app, world.student.email)
    stolen_cookie = client.cookies.get("flarebook")
    assert client.form_post("/signout").status_code == 303
    replay = TestClient(app, base_url="http://testserver", follow_redirects=False, cookies={"flarebook": stolen_cookie})
    assert replay.get("/").status_code == 303


def test_api_token_works_and_a_bad_one_is_refused(anonymous, world, db):
    token = people.issue_token(db, person=db.merge(world.instructor))
    db.commit()
    me = anonymous.get("/api/v1/me", headers={"Authorization": f"Bearer {token}"})
    assert me.status_code == 200
    assert me.json() == {"id": world.instructor.id, "name": world.instructor.name, "roles": ["instructor"]}
    refused = anonymous.get("/api/v1/me", headers={"Authorization": "Bearer fbk_not-a-token"})
    assert refused.status_code == 401


def test_a_browser_session_needs_the_csrf_header_for_api_changes(student_client, world):
    answer = student_client.post("/api/v1/conditions", json={"elevation_ft": 0, "altimeter_hpa": 1013.25,
                                                            "oat_c": 15})
    assert answer.status_code == 403
    allowed = student_client.api("POST", "/api/v1/conditions", json={"elevation_ft": 0, "altimeter_hpa": 1013.25,
                                                                     "oat_c": 15})
    assert allowed.status_code == 200


def test_only_chief_pilots_add_people(instructor_client, chief_client):
    body = {"name": "New Student", "email": "new@school.example", "roles": ["student"], "password": "long-enough-1"}
    assert instructor_client.api("POST", "/api/v1/people", json=body).status_code == 403
    created = chief_client.api("POST", "/api/v1/people", json=body)
    assert created.status_code == 201 and created.json()["roles"] == ["student"]
    again = chief_client.api("POST", "/api/v1/people", json=body)
    assert again.status_code == 409


def test_a_disabled_person_is_signed_out_everywhere(app, world, chief_client):
    student = sign_in(app, world.student.email)
    assert student.get("/").status_code == 200
    assert chief_client.api("PATCH", f"/api/v1/people/{world.student.id}", json={"active": False}).status_code == 200
    assert student.get("/").status_code == 303
