"""Input refused with a 422 that says why, and nothing stored: dates, METAR figures, numbers, text, files.

Yardsticks: OWASP ASVS 5.0 V2 (validation: input is checked against its expected type and range)
and V1 (no control characters in stored text), section numbers from memory; RFC 3339 (a date-time
carries its offset; it must not be dropped); RFC 7578 (a multipart part with a filename is a file);
the Python documentation (datetime.MAXYEAR is 9999, so 9999-12-31T23:59:59-12:00 has no UTC value);
JSON (RFC 8259) has true and false apart from numbers.
"""
from datetime import UTC, date, datetime, timedelta

import pytest
from sqlalchemy import func, select

from server.app import create_app
from server.config import Settings
from server.logbook.models import Attempt, Sortie
from server.people.models import Person
from server.types import utcnow
from tests.conftest import csrf_from
from tests.support import make_sortie


def _count(db, model) -> int:
    db.expire_all()
    return db.scalar(select(func.count()).select_from(model))


@pytest.fixture
def new_sortie(world):
    return {"aircraft_id": world.aircraft.id, "pilot_id": world.student.id, "site_id": world.site.id,
            "flown_at": "2026-11-20T10:00:00Z"}


@pytest.mark.parametrize("flown_at", ["9999-12-31T23:59:59-12:00", "0001-01-01T00:00:00+14:00"])
def test_a_moment_past_the_calendar_python_holds_is_a_422(instructor_client, db, new_sortie, flown_at):
    answer = instructor_client.api("POST", "/api/v1/sorties", json=new_sortie | {"flown_at": flown_at})
    assert answer.status_code == 422 and answer.json()["errors"][0]["field"] == "flown_at"
    assert _count(db, Sortie) == 0


def test_sorties_outside_the_schools_records_are_refused(instructor_client, db, new_sortie):
    for flown_at in ("9999-01-01T00:00:00Z", "0001-01-01T00:00:00Z", "1979-12-31T12:00:00Z",
                     (utcnow() + timedelta(days=2)).isoformat()):
        answer = instructor_client.api("POST", "/api/v1/sorties", json=new_sortie | {"flown_at": flown_at})
        assert answer.status_code == 422, flown_at
    assert _count(db, Sortie) == 0
    soon = instructor_client.api("POST", "/api/v1/sorties", json=new_sortie | {
        "flown_at": (utcnow() + timedelta(hours=12)).isoformat()})
    assert soon.status_code == 201, "a clock a few hours ahead is not an error"
    sortie_id = soon.json()["id"]
    later = instructor_client.api("PATCH", f"/api/v1/sorties/{sortie_id}", json={"flown_at": "9999-01-01T00:00:00Z"})
    assert later.status_code == 422
    assert instructor_client.get(f"/api/v1/sorties/{sortie_id}").json()["flown_at"] != "9999-01-01T00:00:00Z"


def test_where_the_records_begin_is_a_setting(database_url, world, db):
    from fastapi.testclient import TestClient

    from server.people import service as people

    token = people.issue_token(db, person=db.get(Person, world.instructor.id))
    db.commit()
    app = create_app(Settings(database_url=database_url, records_begin=date(2020, 1, 1)))
    try:
        client = TestClient(app, headers={"Authorization": f"Bearer {token}"})
        body = {"aircraft_id": world.aircraft.id, "pilot_id": world.student.id, "site_id": world.site.id}
        assert client.post("/api/v1/sorties", json=body | {"flown_at": "2019-06-01T10:00:00Z"}).status_code == 422
        assert client.post("/api/v1/sorties", json=body | {"flown_at": "2020-06-01T10:00:00Z"}).status_code == 201
    finally:
        app.state.engine.dispose()


METARS = ["EGLL 201020Z 27010KT 9999 15/10 Q0000", "EGLL 201020Z 27010KT 9999 15/10 Q9999",
          "KJFK 201020Z 27010KT 10SM 15/10 A9999", "EGLL 201020Z 27010KT 9999 M99/M99 Q1013"]


@pytest.mark.parametrize("metar", METARS)
def test_a_metar_out_of_range_is_explained_not_a_500(instructor_client, db, world, new_sortie, metar):
    preview = instructor_client.api("POST", "/api/v1/conditions", json={"metar": metar})
    assert preview.status_code == 200  # the conditions preview reads the same METAR
    created = instructor_client.api("POST", "/api/v1/sorties", json=new_sortie | {"metar": metar})
    assert created.status_code == 422 and "The METAR gives" in created.json()["detail"]
    assert _count(db, Sortie) == 0
    sortie = make_sortie(db, world)
    edited = instructor_client.api("PATCH", f"/api/v1/sorties/{sortie.id}", json={"metar": metar})
    assert edited.status_code == 422 and "The METAR gives" in edited.json()["detail"]
    assert instructor_client.get(f"/api/v1/sorties/{sortie.id}").json()["metar"] is None


@pytest.mark.parametrize("field", ["wind_kt", "oat_c", "altimeter_hpa", "pilot_id", "aircraft_id"])
def test_true_is_not_a_number(instructor_client, db, new_sortie, field):
    answer = instructor_client.api("POST", "/api/v1/sorties", json=new_sortie | {field: True})
    assert answer.status_code == 422 and answer.json()["errors"][0]["field"] == field
    assert _count(db, Sortie) == 0


def test_true_is_not_a_touchdown_speed(instructor_client, db, world):
    sortie = make_sortie(db, world)
    attempt = {"maneuver": "straight_in", "termination": "touchdown", "touchdown_speed_kt": True}
    assert instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts", json=attempt).status_code == 422
    assert instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts",
                                 json=attempt | {"touchdown_speed_kt": 1}).status_code == 201
    assert _count(db, Attempt) == 1


@pytest.mark.parametrize("text", ["nul\x00here", "bell\x07", "escape\x1b[31m", "delete\x7f", "c1\x85"])
def test_control_characters_are_refused_in_text(instructor_client, chief_client, db, world, new_sortie, text):
    assert instructor_client.api("POST", "/api/v1/sorties", json=new_sortie | {"remarks": text}).status_code == 422
    sortie = make_sortie(db, world)
    attempt = {"maneuver": "straight_in", "termination": "touchdown", "remarks": text}
    assert instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts", json=attempt).status_code == 422
    person = {"name": text, "email": "new@school.example", "roles": ["student"], "password": "long-enough-1"}
    assert chief_client.api("POST", "/api/v1/people", json=person).status_code == 422
    assert (_count(db, Sortie), _count(db, Attempt)) == (1, 0)
    assert db.scalar(select(Person).where(Person.email == "new@school.example")) is None


def test_tabs_and_line_breaks_stay_welcome(instructor_client, new_sortie):
    answer = instructor_client.api("POST", "/api/v1/sorties", json=new_sortie | {"remarks": "gusty\tday\nsecond line"})
    assert answer.status_code == 201 and answer.json()["remarks"] == "gusty\tday\nsecond line"


def test_the_database_layer_refuses_control_characters_from_any_path(db, world):
    from server.errors import Invalid

    db.get(Person, world.student.id).name = "Sam\x00Student"
    with pytest.raises(Invalid, match="control character"):
        db.flush()
    db.rollback()


def _form(world, **changes) -> dict:
    return {"pilot_id": str(world.student.id), "aircraft_id": str(world.aircraft.id), "site_id": str(world.site.id),
            "flown_at": "2026-11-20T10:00", "altimeter": "1013", "altimeter_unit": "hPa", "oat_c": "15"} | changes


def test_a_file_sent_where_text_is_expected_is_refused(instructor_client, db, world):
    fields = _form(world) | {"csrf_token": instructor_client.csrf}
    answer = instructor_client.post("/sorties/new", data=fields, files={"remarks": ("notes.txt", b"hello", "text/plain")})
    assert answer.status_code == 422 and "text fields only" in answer.text
    assert _count(db, Sortie) == 0
    as_text = instructor_client.post("/sorties/new", data=fields, files={"ignored": (None, b"plain part")})
    assert as_text.status_code == 303, "a multipart form of text parts still works"


def test_a_form_date_with_an_offset_keeps_it(instructor_client, db, world):
    # The school runs on UTC here: 10:00+05:00 is 05:00 UTC, not 10:00.
    answer = instructor_client.form_post("/sorties/new", _form(world, flown_at="2026-11-20T10:00+05:00"))
    assert answer.status_code == 303, answer.text
    stored = db.scalars(select(Sortie)).one()
    assert stored.flown_at == datetime(2026, 11, 20, 5, 0, tzinfo=UTC)
    plain = instructor_client.form_post("/sorties/new", _form(world, flown_at="2026-11-21T10:00"))
    assert plain.status_code == 303
    db.expire_all()
    assert max(s.flown_at for s in db.scalars(select(Sortie))) == datetime(2026, 11, 21, 10, 0, tzinfo=UTC)
