"""Who may read a pilot's records follows the school's assignments, not sorties flown together.

Yardsticks: OWASP ASVS 5.0 V8 (authorization: access follows the data owner's assignments and is
checked on every request; section numbers from memory); the access rule of the design: students see
their own records, instructors the pilots enrolled with them, chief pilots everyone.
"""
from datetime import UTC, date, datetime

from sqlalchemy import func, select

from server.logbook.models import Sortie
from server.people.models import Person
from server.training.models import Enrolment, Program
from tests.support import make_sortie


def _their_records(db, world):
    """The other student's signed sortie, flown with the other instructor."""
    return make_sortie(db, world, instructor=world.other_instructor, pilot=world.other_student, attempts=1, sign=True)


def _refused_everything_of_theirs(client, world, theirs):
    pilot = world.other_student.id
    assert client.get(f"/api/v1/sorties/{theirs.id}").status_code == 404
    assert client.get(f"/api/v1/people/{pilot}").status_code == 404
    assert client.get(f"/api/v1/people/{pilot}/trends?maneuver=straight_in&termination=touchdown").status_code == 404
    assert client.get(f"/people/{pilot}/progress").status_code == 404
    assert theirs.id not in [s["id"] for s in client.get(f"/api/v1/sorties?pilot_id={pilot}").json()]


def test_an_instructor_cannot_start_a_sortie_for_a_pilot_not_enrolled_with_them(instructor_client, db, world):
    theirs = _their_records(db, world)
    before = db.scalar(select(func.count()).select_from(Sortie))
    answer = instructor_client.api("POST", "/api/v1/sorties", json={
        "flown_at": "2026-11-20T10:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.other_student.id,
        "site_id": world.site.id})
    assert answer.status_code == 403 and "enrolled with you" in answer.json()["detail"]
    db.expire_all()
    assert db.scalar(select(func.count()).select_from(Sortie)) == before
    _refused_everything_of_theirs(instructor_client, world, theirs)


def test_an_empty_sortie_flown_together_gives_no_access_to_the_pilots_records(instructor_client, db, world):
    """As the old rule allowed: an empty sortie naming the pilot, already in the database."""
    theirs = _their_records(db, world)
    db.add(Sortie(flown_at=datetime(2026, 11, 21, 9, tzinfo=UTC), aircraft_id=world.aircraft.id,
                  instructor_id=world.instructor.id, pilot_id=world.other_student.id, site_id=world.site.id,
                  created_by_id=world.instructor.id, state="draft", remarks=""))
    db.commit()
    _refused_everything_of_theirs(instructor_client, world, theirs)
    names = [p["name"] for p in instructor_client.get("/api/v1/people").json()]
    assert world.other_student.name not in names and world.student.name in names


def test_a_chief_pilot_assigns_a_sortie_and_the_instructor_sees_only_that_one(chief_client, instructor_client, db, world):
    theirs = _their_records(db, world)
    assigned = chief_client.api("POST", "/api/v1/sorties", json={
        "flown_at": "2026-11-22T10:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.other_student.id,
        "site_id": world.site.id, "instructor_id": world.instructor.id})
    assert assigned.status_code == 201, assigned.text
    assert instructor_client.get(f"/api/v1/sorties/{assigned.json()['id']}").status_code == 200
    _refused_everything_of_theirs(instructor_client, world, theirs)


def test_enrolment_with_the_instructor_gives_access(instructor_client, db, world):
    theirs = _their_records(db, world)
    program = db.scalars(select(Program)).first()
    for enrolment in db.scalars(select(Enrolment).where(Enrolment.student_id == world.other_student.id)):
        enrolment.active = False
    db.add(Enrolment(program_id=program.id, student_id=world.other_student.id, instructor_id=world.instructor.id,
                     started_on=date(2026, 11, 1), active=True))
    db.commit()
    assert instructor_client.get(f"/api/v1/sorties/{theirs.id}").status_code == 200
    assert instructor_client.get(f"/people/{world.other_student.id}/progress").status_code == 200
    started = instructor_client.api("POST", "/api/v1/sorties", json={
        "flown_at": "2026-11-20T10:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.other_student.id,
        "site_id": world.site.id})
    assert started.status_code == 201
    assert db.get(Person, world.other_student.id) is not None
