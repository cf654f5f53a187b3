"""The access matrix: every route of the app, as each role and as a stranger.

Anchor: OWASP ASVS 5.0 level 2, V8 (authorization: every route checks who asks; a person reaches
only their own records, V8.2.2) and the access-matrix test asked for by issue 6.

The routes are read from the app itself, so a new route without an entry here fails
`test_every_route_has_an_entry`: whoever adds a route decides who may reach it.
"""
import re
from dataclasses import dataclass
from datetime import UTC, datetime

import pytest
from fastapi.routing import iter_route_contexts
from fastapi.testclient import TestClient
from sqlalchemy import select

from server.app import create_app
from server.config import Settings
from server.logbook import service as logbook
from server.logbook.models import Track
from server.logbook.schemas import AttemptFields
from server.people import service as people
from server.people.models import ApiToken, Person
from tests.conftest import sign_in
from tests.support import make_sortie

STUDENT, INSTRUCTOR, CHIEF, ADMIN = "student", "instructor", "chief", "admin"
EVERYONE = frozenset({STUDENT, INSTRUCTOR, CHIEF, ADMIN})
STAFF = frozenset({INSTRUCTOR, CHIEF, ADMIN})
SORTIE_STAFF = frozenset({INSTRUCTOR, CHIEF})
CHIEF_ADMIN = frozenset({CHIEF, ADMIN})
CHIEF_ONLY = frozenset({CHIEF})
# A marker in the other student's records: it must never reach anyone who may not see them.
MARKER = "ZQX-private-remark"


@dataclass(frozen=True)
class Access:
    """How a route is reached: public, page (sign-in redirect), api (401), feed (secret link).

    `roles` says who gets an answer to a GET with ids from their own school records (the first
    student's sortie, flown with the first instructor); the others get 403 or 404. Changes
    (POST, PATCH, PUT, DELETE) are checked for sign-in and the CSRF token; their role rules are
    tested beside each feature.
    """

    kind: str
    roles: frozenset = frozenset()


PUBLIC = Access("public")
FEED = Access("feed")


def page(roles=EVERYONE) -> Access:
    return Access("page", frozenset(roles))


def api(roles=EVERYONE) -> Access:
    return Access("api", frozenset(roles))


CHANGE_PAGE, CHANGE_API = page(()), api(())

ROUTES: dict[tuple[str, str], Access] = {
    # Framework and files: public, and hold no school data.
    ("GET", "/openapi.json"): PUBLIC,
    ("GET", "/docs"): PUBLIC,
    ("GET", "/docs/oauth2-redirect"): PUBLIC,
    ("GET", "/redoc"): PUBLIC,
    ("MOUNT", "/static"): PUBLIC,
    ("GET", "/signin"): PUBLIC,
    ("GET", "/favicon.ico"): PUBLIC,
    ("GET", "/sw.js"): PUBLIC,  # the sortie sheet's offline worker: a static script
    ("POST", "/signin"): PUBLIC,
    # A calendar feed is reached by the secret in its link alone (calendar apps cannot sign in).
    ("GET", "/calendar/{secret}.ics"): FEED,

    # People and the caller.
    ("GET", "/api/v1/me"): api(),
    ("GET", "/api/v1/people"): api(),
    ("POST", "/api/v1/people"): CHANGE_API,
    ("GET", "/api/v1/people/{person_id}"): api(),
    ("PATCH", "/api/v1/people/{person_id}"): CHANGE_API,
    ("POST", "/signout"): CHANGE_PAGE,
    ("GET", "/"): page(),
    ("POST", "/api/v1/me/password"): CHANGE_API,
    ("GET", "/api/v1/me/tokens"): api(),
    ("DELETE", "/api/v1/me/tokens/{token_id}"): CHANGE_API,
    ("GET", "/account"): page(),
    ("POST", "/account/password"): CHANGE_PAGE,
    ("POST", "/account/tokens/{token_id}/revoke"): CHANGE_PAGE,
    ("POST", "/account/calendar-links/{feed_id}/revoke"): CHANGE_PAGE,
    ("GET", "/setup/people/{person_id}/reset-password"): page(CHIEF_ADMIN),
    ("POST", "/setup/people/{person_id}/reset-password"): CHANGE_PAGE,

    # Fleet and setup.
    ("GET", "/api/v1/types"): api(),
    ("POST", "/api/v1/types"): CHANGE_API,
    ("GET", "/api/v1/types/{type_id}"): api(),
    ("PATCH", "/api/v1/types/{type_id}"): CHANGE_API,
    ("GET", "/api/v1/aircraft"): api(),
    ("POST", "/api/v1/aircraft"): CHANGE_API,
    ("GET", "/api/v1/sites"): api(),
    ("POST", "/api/v1/sites"): CHANGE_API,
    ("GET", "/setup"): page(CHIEF_ADMIN),
    ("GET", "/setup/types"): page(CHIEF_ADMIN),
    ("GET", "/setup/types/new"): page(CHIEF_ADMIN),
    ("POST", "/setup/types/new"): CHANGE_PAGE,
    ("GET", "/setup/types/{type_id}/edit"): page(CHIEF_ADMIN),
    ("POST", "/setup/types/{type_id}/edit"): CHANGE_PAGE,
    ("GET", "/setup/types/{type_id}"): page(CHIEF_ADMIN),
    ("GET", "/setup/people"): page(CHIEF_ADMIN),
    ("GET", "/setup/people/new"): page(CHIEF_ADMIN),
    ("POST", "/setup/people/new"): CHANGE_PAGE,
    ("GET", "/setup/people/{person_id}"): page(CHIEF_ADMIN),
    ("GET", "/setup/people/{person_id}/edit"): page(CHIEF_ADMIN),
    ("POST", "/setup/people/{person_id}/edit"): CHANGE_PAGE,
    ("POST", "/setup/people/{person_id}/deactivate"): CHANGE_PAGE,
    ("POST", "/setup/people/{person_id}/reactivate"): CHANGE_PAGE,
    ("POST", "/setup/people/{person_id}/enrol"): CHANGE_PAGE,
    ("POST", "/setup/people/{person_id}/enrolments/{enrolment_id}/check-instructor"): CHANGE_PAGE,
    ("GET", "/setup/aircraft"): page(CHIEF_ADMIN),
    ("GET", "/setup/aircraft/new"): page(CHIEF_ADMIN),
    ("POST", "/setup/aircraft/new"): CHANGE_PAGE,
    ("GET", "/setup/aircraft/{aircraft_id}/edit"): page(CHIEF_ADMIN),
    ("POST", "/setup/aircraft/{aircraft_id}/edit"): CHANGE_PAGE,
    ("POST", "/setup/aircraft/{aircraft_id}/deactivate"): CHANGE_PAGE,
    ("POST", "/setup/aircraft/{aircraft_id}/reactivate"): CHANGE_PAGE,
    ("GET", "/setup/sites"): page(CHIEF_ADMIN),
    ("GET", "/setup/sites/new"): page(CHIEF_ADMIN),
    ("POST", "/setup/sites/new"): CHANGE_PAGE,
    ("GET", "/setup/sites/{site_id}/edit"): page(CHIEF_ADMIN),
    ("POST", "/setup/sites/{site_id}/edit"): CHANGE_PAGE,
    ("POST", "/setup/sites/{site_id}/deactivate"): CHANGE_PAGE,
    ("POST", "/setup/sites/{site_id}/reactivate"): CHANGE_PAGE,
    ("GET", "/setup/standards"): page(CHIEF_ADMIN),
    ("GET", "/setup/standards/new"): page(CHIEF_ADMIN),
    ("POST", "/setup/standards/new"): CHANGE_PAGE,
    ("GET", "/setup/standards/{standard_id}/edit"): page(CHIEF_ADMIN),
    ("POST", "/setup/standards/{standard_id}/edit"): CHANGE_PAGE,

    # Sorties and attempts.
    ("POST", "/api/v1/conditions"): CHANGE_API,
    ("GET", "/api/v1/sorties"): api(),
    ("POST", "/api/v1/sorties"): CHANGE_API,
    ("GET", "/api/v1/sorties/{sortie_id}"): api(),
    ("PATCH", "/api/v1/sorties/{sortie_id}"): CHANGE_API,
    ("DELETE", "/api/v1/sorties/{sortie_id}"): CHANGE_API,
    ("POST", "/api/v1/sorties/{sortie_id}/sign"): CHANGE_API,
    ("POST", "/api/v1/sorties/{sortie_id}/acknowledge"): CHANGE_API,
    ("POST", "/api/v1/sorties/{sortie_id}/amendments"): CHANGE_API,
    ("POST", "/api/v1/sorties/{sortie_id}/attempts"): CHANGE_API,
    ("GET", "/api/v1/attempts/{attempt_id}"): api(),
    ("PATCH", "/api/v1/attempts/{attempt_id}"): CHANGE_API,
    ("DELETE", "/api/v1/attempts/{attempt_id}"): CHANGE_API,
    ("GET", "/sorties"): page(),
    ("GET", "/sorties/new"): page(SORTIE_STAFF),
    ("POST", "/sorties/new"): CHANGE_PAGE,
    ("POST", "/sorties/conditions"): CHANGE_PAGE,
    ("GET", "/sorties/{sortie_id}"): page(),
    ("POST", "/sorties/{sortie_id}/attempts"): CHANGE_PAGE,
    # The correction form of a draft (the matrix's own sortie is signed: nobody may correct it).
    ("GET", "/sorties/{sortie_id}/details"): page(()),
    ("POST", "/sorties/{sortie_id}/details"): CHANGE_PAGE,
    ("POST", "/sorties/{sortie_id}/discard"): CHANGE_PAGE,
    ("GET", "/attempts/{attempt_id}/edit"): page(),
    ("GET", "/attempts/{attempt_id}"): page(),
    ("POST", "/attempts/{attempt_id}"): CHANGE_PAGE,
    ("POST", "/attempts/{attempt_id}/delete"): CHANGE_PAGE,
    ("POST", "/sorties/{sortie_id}/sign"): CHANGE_PAGE,
    ("POST", "/sorties/{sortie_id}/acknowledge"): CHANGE_PAGE,
    ("POST", "/sorties/{sortie_id}/amend"): CHANGE_PAGE,
    ("GET", "/sorties/{sortie_id}/history"): page(),

    # Recorded tracks: seen with their sortie; imported and accepted by its instructor (tests/logbook/test_tracks_api.py).
    ("POST", "/api/v1/sorties/{sortie_id}/tracks"): CHANGE_API,
    ("GET", "/api/v1/tracks/{track_id}"): api(),
    ("POST", "/api/v1/tracks/{track_id}/detections/{index}/accept"): CHANGE_API,
    ("POST", "/sorties/{sortie_id}/tracks"): CHANGE_PAGE,
    ("POST", "/tracks/{track_id}/detections/{index}/accept"): CHANGE_PAGE,

    # Progress, programs and standards.
    ("GET", "/api/v1/people/{pilot_id}/trends"): api(),
    ("GET", "/api/v1/programs"): api(),
    ("POST", "/api/v1/programs"): CHANGE_API,
    ("GET", "/api/v1/programs/{program_id}"): api(),
    ("PUT", "/api/v1/programs/{program_id}"): CHANGE_API,
    ("POST", "/api/v1/programs/{program_id}/enrolments"): CHANGE_API,
    ("GET", "/api/v1/people/{pilot_id}/program"): api(),
    ("POST", "/api/v1/enrolments/{enrolment_id}/lessons/{lesson_id}/confirm"): CHANGE_API,
    ("POST", "/api/v1/enrolments/{enrolment_id}/stage-checks"): CHANGE_API,
    ("PUT", "/api/v1/enrolments/{enrolment_id}/check-instructor"): CHANGE_API,
    ("GET", "/progress"): page(),
    ("GET", "/people/{pilot_id}/progress"): page(),
    ("GET", "/programs"): page(),
    ("POST", "/programs"): CHANGE_PAGE,
    ("GET", "/programs/{program_id}"): page(),
    ("POST", "/programs/{program_id}/edit"): CHANGE_PAGE,
    ("POST", "/programs/{program_id}/enrol"): CHANGE_PAGE,
    ("POST", "/enrolments/{enrolment_id}/lessons/{lesson_id}/confirm"): CHANGE_PAGE,
    ("POST", "/enrolments/{enrolment_id}/stage-check"): CHANGE_PAGE,
    ("GET", "/api/v1/standards"): api(),
    ("POST", "/api/v1/standards"): CHANGE_API,
    ("GET", "/api/v1/standards/{standard_id}"): api(),
    ("PATCH", "/api/v1/standards/{standard_id}"): CHANGE_API,

    # Safety digest: chief pilots only.
    ("GET", "/api/v1/safety/digest"): api(CHIEF_ONLY),
    ("GET", "/api/v1/safety/attempts"): api(CHIEF_ONLY),
    ("GET", "/safety"): page(CHIEF_ONLY),
    ("GET", "/safety/attempts"): page(CHIEF_ONLY),
    ("GET", "/safety/digest.csv"): page(CHIEF_ONLY),

    # Currency and the readiness board.
    ("GET", "/api/v1/rules"): api(),
    ("POST", "/api/v1/rules"): CHANGE_API,
    ("GET", "/api/v1/rules/{rule_id}"): api(),
    ("PATCH", "/api/v1/rules/{rule_id}"): CHANGE_API,
    ("DELETE", "/api/v1/rules/{rule_id}"): CHANGE_API,
    ("GET", "/api/v1/people/{person_id}/currency"): api(),
    ("GET", "/api/v1/currency"): api(CHIEF_ADMIN),
    ("GET", "/api/v1/calendar-feeds"): api(),
    ("POST", "/api/v1/calendar-feeds"): CHANGE_API,
    ("DELETE", "/api/v1/calendar-feeds/{feed_id}"): CHANGE_API,
    ("GET", "/currency"): page(CHIEF_ADMIN),
    ("GET", "/currency/board.csv"): page(CHIEF_ADMIN),
    ("GET", "/currency/people/{person_id}"): page(),
    ("GET", "/currency/rules"): page(CHIEF_ADMIN),
    ("POST", "/currency/rules"): CHANGE_PAGE,
    ("GET", "/currency/rules/{rule_id}"): page(CHIEF_ADMIN),
    ("POST", "/currency/rules/{rule_id}"): CHANGE_PAGE,
    ("POST", "/currency/rules/{rule_id}/delete"): CHANGE_PAGE,
    ("GET", "/currency/calendar"): page(),
    ("POST", "/currency/calendar"): CHANGE_PAGE,
    ("POST", "/currency/calendar/{feed_id}/revoke"): CHANGE_PAGE,

    # Standardisation and imports of earlier records (issue 14): chief pilots and administrators.
    ("GET", "/api/v1/standardisation"): api(CHIEF_ADMIN),
    ("GET", "/api/v1/standardisation/attempts"): api(CHIEF_ADMIN),
    ("GET", "/standardisation"): page(CHIEF_ADMIN),
    ("GET", "/standardisation/attempts"): page(CHIEF_ADMIN),
    ("POST", "/api/v1/imports"): CHANGE_API,
    ("GET", "/api/v1/imports"): api(CHIEF_ADMIN),
    ("GET", "/api/v1/imports/{batch_id}"): api(CHIEF_ADMIN),
    ("GET", "/setup/imports"): page(CHIEF_ADMIN),
    ("POST", "/setup/imports"): CHANGE_PAGE,
    ("GET", "/setup/imports/{batch_id}"): page(CHIEF_ADMIN),
}

# Query strings a route needs to answer at all.
QUERIES = {"/api/v1/people/{pilot_id}/trends": "?maneuver=straight_in&termination=touchdown"}

# Path parameters naming a pilot's records: a student given the other student's ids must get nothing.
PILOT_SCOPED = {"person_id", "pilot_id", "sortie_id", "attempt_id", "enrolment_id", "track_id"}


def app_routes() -> set[tuple[str, str]]:
    """Every (method, path) the app answers, read from the app itself."""
    found = set()
    for route in iter_route_contexts(create_app(Settings(database_url="sqlite://")).routes):
        methods = set(route.methods or ()) - {"HEAD"}
        if not methods:
            found.add(("MOUNT", route.path))
        found |= {(method, route.path) for method in methods}
    return found


def test_every_route_has_an_entry():
    routes = app_routes()
    missing = sorted(routes - ROUTES.keys())
    stale = sorted(ROUTES.keys() - routes)
    assert not missing, f"routes without an access-matrix entry (add them to ROUTES): {missing}"
    assert not stale, f"access-matrix entries for routes that no longer exist: {stale}"


def fill(path: str, ids: dict) -> str:
    return re.sub(r"\{(\w+)\}", lambda m: str(ids[m.group(1)]), path) + QUERIES.get(path, "")


def _stored_track(db, sortie, uploader) -> int:
    """A track row of a sortie, as an import would leave it (the import itself is tested in tests/logbook/test_tracks_api.py)."""
    track = Track(sortie_id=sortie.id, format="csv", sha256="0" * 64, size_bytes=1, raw=b"-", points=10,
                  sample_rate_hz=1.0, started_at=sortie.flown_at, ended_at=sortie.flown_at, has_doppler_speed=False,
                  ground_ref="site_elevation", detections=[], notes=[], uploaded_by_id=uploader.id)
    db.add(track)
    db.commit()
    return track.id


@pytest.fixture
def school(app, db, world):
    """The invented school's records as seen by the matrix: ids of own and of someone else's records."""
    admin = people.create_person(db, name="Ada Administrator", email="admin@school.example", roles=["admin"],
                                 password="test-password-1")
    db.commit()
    own = make_sortie(db, world, attempts=2, sign=True, flown_at=datetime(2026, 11, 10, 9, tzinfo=UTC))
    theirs = make_sortie(db, world, instructor=world.other_instructor, pilot=world.other_student,
                         flown_at=datetime(2026, 11, 11, 9, tzinfo=UTC), remarks=MARKER)
    actor = db.get(Person, world.other_instructor.id)
    logbook.add_attempt(db, actor=actor, sortie=theirs, data=AttemptFields(
        maneuver="straight_in", termination="touchdown", touchdown_speed_kt=12, remarks=MARKER))
    db.commit()
    db.refresh(own)
    db.refresh(theirs)
    own_track, their_track = (_stored_track(db, sortie, uploader) for sortie, uploader in
                              ((own, world.instructor), (theirs, world.other_instructor)))
    token = people.issue_token(db, person=db.get(Person, world.chief.id))
    db.commit()
    chief = TestClient(app, base_url="http://testserver", headers={"Authorization": f"Bearer {token}"})

    def made(answer) -> dict:
        assert answer.status_code == 201, answer.text
        return answer.json()

    program = made(chief.post("/api/v1/programs", json={"name": "Matrix syllabus", "stages": [
        {"name": "Stage one", "lessons": [{"name": "First autorotations", "requirements": [
            {"maneuver": "straight_in", "termination": "power_recovery", "attempts_needed": 1}]}]}]}))
    lesson_id = program["stages"][0]["lessons"][0]["id"]
    enrol = made(chief.post(f"/api/v1/programs/{program['id']}/enrolments", json={
        "student_id": world.student.id, "instructor_id": world.instructor.id, "started_on": "2026-11-01"}))
    their_enrol = made(chief.post(f"/api/v1/programs/{program['id']}/enrolments", json={
        "student_id": world.other_student.id, "instructor_id": world.other_instructor.id,
        "started_on": "2026-11-01"}))
    standard = made(chief.post("/api/v1/standards", json={"name": "Matrix standard", "level": "private"}))
    rule = made(chief.post("/api/v1/rules", json={"name": "Matrix rule", "window_days": 90, "min_count": 1}))
    feed = made(chief.post("/api/v1/calendar-feeds", json={"person_id": world.student.id}))
    secret = re.search(r"/calendar/([^/]+)\.ics", feed["url"]).group(1)
    token_id = db.scalars(select(ApiToken.id).where(ApiToken.person_id == world.chief.id)).first()
    batch = chief.post("/api/v1/imports", data={"kind": "people", "dry_run": "false"},
                       files={"file": ("people.csv", b"Name,Email\r\nMatrix Newcomer,newcomer@school.example\r\n")})
    assert batch.status_code == 200, batch.text
    common = {"token_id": token_id, "batch_id": batch.json()["batch_id"], "type_id": world.helicopter.id,
              "aircraft_id": world.aircraft.id, "site_id": world.site.id,
              "program_id": program["id"], "lesson_id": lesson_id, "index": 1,
              "standard_id": standard["id"], "rule_id": rule["id"], "feed_id": feed["id"], "secret": secret}
    return {
        "own": common | {"person_id": world.student.id, "pilot_id": world.student.id, "sortie_id": own.id,
                         "attempt_id": own.attempts[0].id, "enrolment_id": enrol["id"], "track_id": own_track},
        "theirs": common | {"person_id": world.other_student.id, "pilot_id": world.other_student.id,
                            "sortie_id": theirs.id, "attempt_id": theirs.attempts[0].id,
                            "enrolment_id": their_enrol["id"], "track_id": their_track},
        "admin": admin,
    }


@pytest.fixture
def clients(app, world, school):
    return {STUDENT: sign_in(app, world.student.email), INSTRUCTOR: sign_in(app, world.instructor.email),
            CHIEF: sign_in(app, world.chief.email), ADMIN: sign_in(app, school["admin"].email)}


def test_strangers_are_sent_to_sign_in_or_refused(anonymous, school):
    wrong = []
    for (method, path), access in sorted(ROUTES.items()):
        if access.kind in ("public", "feed") or method == "MOUNT":
            continue
        answer = anonymous.request(method, fill(path, school["own"]))
        if access.kind == "page":
            ok = answer.status_code == 303 and answer.headers.get("location") == "/signin"
        else:
            ok = answer.status_code == 401
        if not ok:
            wrong.append(f"{method} {path}: {answer.status_code}")
    assert not wrong, "a stranger reached these routes:\n" + "\n".join(wrong)


def test_public_routes_answer_strangers_without_school_data(anonymous, world, school):
    for (method, path), access in ROUTES.items():
        if access.kind != "public" or method != "GET":
            continue
        answer = anonymous.get(path)
        assert answer.status_code == 200, path
        assert world.student.name not in answer.text and MARKER not in answer.text
    assert anonymous.get("/static/app.css").status_code == 200


def test_a_calendar_feed_needs_its_secret(anonymous, school, world):
    good = anonymous.get(fill("/calendar/{secret}.ics", school["own"]))
    assert good.status_code == 200 and good.headers["content-type"].startswith("text/calendar")
    guessed = anonymous.get("/calendar/not-the-secret.ics")
    assert guessed.status_code == 404 and world.student.name not in guessed.text


@pytest.mark.parametrize("role", sorted(EVERYONE))
def test_each_role_reaches_exactly_its_routes(role, clients, school, world):
    client = clients[role]
    wrong = []
    for (method, path), access in sorted(ROUTES.items()):
        if method != "GET" or access.kind not in ("page", "api"):
            continue
        answer = client.get(fill(path, school["own"]))
        allowed = role in access.roles
        if allowed and not answer.status_code < 400:
            wrong.append(f"{method} {path}: {answer.status_code}, expected an answer")
        if not allowed and answer.status_code not in (403, 404):
            wrong.append(f"{method} {path}: {answer.status_code}, expected 403 or 404")
        if role == STUDENT and (world.other_student.name in answer.text or MARKER in answer.text):
            wrong.append(f"{method} {path}: shows the other student's records to a student")
        if role == INSTRUCTOR and MARKER in answer.text:
            wrong.append(f"{method} {path}: shows another instructor's student's remarks")
    assert not wrong, f"as {role}:\n" + "\n".join(wrong)


@pytest.mark.parametrize("role", [STUDENT, INSTRUCTOR])
def test_nobody_reaches_records_of_a_pilot_they_do_not_fly_with(role, clients, school, world):
    """The other student flies with the other instructor: neither the student nor the first
    instructor may read their sortie, attempts, progress, trends or currency by id."""
    client = clients[role]
    wrong = []
    for (method, path), access in sorted(ROUTES.items()):
        names = set(re.findall(r"\{(\w+)\}", path))
        if method != "GET" or not names & PILOT_SCOPED or access.kind not in ("page", "api"):
            continue
        answer = client.get(fill(path, school["theirs"]))
        if answer.status_code not in (403, 404):
            wrong.append(f"{path}: {answer.status_code}")
        if MARKER in answer.text or (role == STUDENT and world.other_student.name in answer.text):
            wrong.append(f"{path}: the answer holds the other pilot's records")
    assert not wrong, f"as {role}, with the other student's ids:\n" + "\n".join(wrong)


def test_every_change_needs_the_csrf_token_from_a_browser(app, world, school):
    """A signed-in browser session without the token changes nothing, on every unsafe route."""
    client = sign_in(app, world.chief.email)
    wrong = []
    for (method, path), access in sorted(ROUTES.items()):
        if method in ("GET", "MOUNT") or access.kind not in ("page", "api"):
            continue
        answer = client.request(method, fill(path, school["own"]))
        if answer.status_code != 403:
            wrong.append(f"{method} {path}: {answer.status_code}")
    assert not wrong, "accepted without the CSRF token:\n" + "\n".join(wrong)
