"""Idempotency-Key on the create routes, per the IETF httpapi draft "The Idempotency-Key HTTP Header
Field" (draft-ietf-httpapi-idempotency-key-header): a repeat returns the first answer, the same key with
another request is refused with 422, keys belong to the person who sent them."""
import threading
import uuid

from fastapi.testclient import TestClient
from sqlalchemy import func, select

from server.logbook.models import Attempt, Sortie
from server.people import service as people
from tests.support import make_sortie

ATTEMPT = {"maneuver": "straight_in", "termination": "touchdown", "flare_height_ft": 85, "touchdown_speed_kt": 2}


def sortie_body(world) -> dict:
    return {"flown_at": "2026-11-22T08:30:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.student.id,
            "site_id": world.site.id, "oat_c": 8}


def count(db, model) -> int:
    db.expire_all()
    return db.scalar(select(func.count()).select_from(model))


def test_five_sends_of_one_sortie_create_it_once_and_answer_alike(instructor_client, world, db):
    key = f'"{uuid.uuid4()}"'  # the draft sends the key as a quoted structured-field string
    answers = [instructor_client.api("POST", "/api/v1/sorties", json=sortie_body(world),
                                     headers={"Idempotency-Key": key}) for _ in range(5)]
    assert [a.status_code for a in answers] == [201] * 5
    assert len({a.text for a in answers}) == 1
    assert count(db, Sortie) == 1


def test_five_sends_of_one_attempt_log_it_once(instructor_client, world, db):
    sortie = make_sortie(db, world)
    key = str(uuid.uuid4())
    answers = [instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts", json=ATTEMPT,
                                     headers={"Idempotency-Key": key}) for _ in range(5)]
    assert {a.status_code for a in answers} == {201} and len({a.json()["id"] for a in answers}) == 1
    assert count(db, Attempt) == 1
    # Without a key, each send is a new attempt.
    for _ in range(2):
        instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts", json=ATTEMPT)
    assert count(db, Attempt) == 3


def test_the_same_key_with_another_body_is_refused_with_422(instructor_client, world, db):
    key = str(uuid.uuid4())
    first = instructor_client.api("POST", "/api/v1/sorties", json=sortie_body(world), headers={"Idempotency-Key": key})
    assert first.status_code == 201
    other = instructor_client.api("POST", "/api/v1/sorties", json={**sortie_body(world), "oat_c": 9},
                                  headers={"Idempotency-Key": key})
    assert other.status_code == 422 and "Idempotency-Key" in other.json()["detail"]
    assert count(db, Sortie) == 1


def test_keys_belong_to_the_person_who_sent_them(instructor_client, chief_client, world, db):
    key = str(uuid.uuid4())
    mine = instructor_client.api("POST", "/api/v1/sorties", json=sortie_body(world), headers={"Idempotency-Key": key})
    theirs = chief_client.api("POST", "/api/v1/sorties", json=sortie_body(world), headers={"Idempotency-Key": key})
    assert mine.status_code == theirs.status_code == 201
    assert mine.json()["id"] != theirs.json()["id"] and count(db, Sortie) == 2


def test_an_unusable_key_is_refused_and_nothing_is_made(instructor_client, world, db):
    answer = instructor_client.api("POST", "/api/v1/sorties", json=sortie_body(world),
                                   headers={"Idempotency-Key": "x" * 300})
    assert answer.status_code == 400 and "Idempotency-Key" in answer.json()["detail"]
    assert count(db, Sortie) == 0


def test_five_sends_at_once_create_one_sortie(app, world, db):
    with app.state.sessions() as session:
        token = people.issue_token(session, person=session.merge(world.instructor), label="tablet")
        session.commit()
    key, start, answers = str(uuid.uuid4()), threading.Barrier(5), []

    def send():
        client = TestClient(app, base_url="http://testserver")
        start.wait()
        answers.append(client.post("/api/v1/sorties", json=sortie_body(world),
                                   headers={"Authorization": f"Bearer {token}", "Idempotency-Key": key}))

    threads = [threading.Thread(target=send) for _ in range(5)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert [a.status_code for a in answers] == [201] * 5, [a.text for a in answers]
    assert len({a.json()["id"] for a in answers}) == 1
    assert count(db, Sortie) == 1


def test_setup_creates_take_a_key_too(chief_client, world, db):
    from server.fleet.models import Site

    key = str(uuid.uuid4())
    body = {"name": "North Pad (test)", "elevation_ft": 320}
    answers = [chief_client.api("POST", "/api/v1/sites", json=body, headers={"Idempotency-Key": key}) for _ in range(3)]
    assert [a.status_code for a in answers] == [201] * 3 and len({a.json()["id"] for a in answers}) == 1
    assert count(db, Site) == 2  # the test school's own site and this one
