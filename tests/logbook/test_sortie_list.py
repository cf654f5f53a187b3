"""The sortie list: filters by pilot, instructor, aircraft, record state and dates, kept in the address,
and pages of 50 both ways.

Anchor: issue 13 ("filters ... kept in the address; paging both ways"); dates are the school's local
dates (DESIGN section 2), both ends included.
"""
from datetime import UTC, datetime, timedelta

from server.logbook import service as logbook
from server.people import service as people
from server.people.models import Person
from tests.support import add_second_type, cell_texts, make_sortie, parsed


def _rows(client, **params):
    page = parsed(client.get("/sorties", params=params))
    table = page.find("table", class_="list")
    return cell_texts(table) if table else []


def test_filters_by_pilot_instructor_aircraft_and_state(chief_client, db, world):
    other_aircraft = add_second_type(db)
    make_sortie(db, world, attempts=1, sign=True, flown_at=datetime(2026, 11, 3, 9, tzinfo=UTC))
    theirs = make_sortie(db, world, instructor=world.other_instructor, pilot=world.other_student, attempts=1,
                         flown_at=datetime(2026, 11, 4, 9, tzinfo=UTC))
    theirs.aircraft_id = other_aircraft.id
    db.commit()
    read = make_sortie(db, world, attempts=1, sign=True, flown_at=datetime(2026, 11, 5, 9, tzinfo=UTC))
    logbook.acknowledge_sortie(db, actor=db.get(Person, world.student.id), sortie=read)
    db.commit()

    assert [r[1] for r in _rows(chief_client)] == ["Sam Student", "Tess Otherstudent", "Sam Student"]
    assert [r[1] for r in _rows(chief_client, pilot_id=world.other_student.id)] == ["Tess Otherstudent"]
    assert [r[2] for r in _rows(chief_client, instructor_id=world.instructor.id)] == ["Ivo Instructor"] * 2
    assert [r[3] for r in _rows(chief_client, aircraft_id=other_aircraft.id)] == ["TS-FIN"]
    assert [r[0] for r in _rows(chief_client, state="draft")] == ["04 Nov 2026 09:00"]
    assert [r[6] for r in _rows(chief_client, state="signed")] == ["Signed"]
    assert [r[6] for r in _rows(chief_client, state="acknowledged")] == ["Signed and acknowledged"]
    # The filters stay in the form as chosen, and an empty choice means any.
    page = parsed(chief_client.get("/sorties", params={"pilot_id": world.student.id, "instructor_id": "",
                                                       "state": "signed"}))
    assert page.find("select", attrs={"name": "pilot_id"}).find("option", selected=True)["value"] == str(world.student.id)
    assert page.find("select", attrs={"name": "state"}).find("option", selected=True)["value"] == "signed"


def test_dates_are_the_schools_local_dates_both_ends_included(chief_client, db, world):
    people.school(db).timezone = "Pacific/Auckland"  # UTC+13 in November
    db.commit()
    # 20 Nov 2026 11:30 UTC is already 21 Nov in Auckland.
    make_sortie(db, world, attempts=1, flown_at=datetime(2026, 11, 20, 11, 30, tzinfo=UTC))
    make_sortie(db, world, attempts=1, flown_at=datetime(2026, 11, 19, 9, 0, tzinfo=UTC))
    assert len(_rows(chief_client, date_from="2026-11-21", date_to="2026-11-21")) == 1
    assert len(_rows(chief_client, date_from="2026-11-19", date_to="2026-11-20")) == 1
    assert len(_rows(chief_client, date_to="2026-11-21")) == 2
    backwards = chief_client.get("/sorties", params={"date_from": "2026-11-22", "date_to": "2026-11-01"})
    assert backwards.status_code == 422 and "must not be after" in backwards.text
    assert chief_client.get("/sorties", params={"date_from": "21/11/2026"}).status_code == 422


def test_pages_go_both_ways_and_keep_the_filters(chief_client, db, world):
    start = datetime(2026, 6, 1, 9, tzinfo=UTC)
    for day in range(55):
        make_sortie(db, world, attempts=1, flown_at=start + timedelta(days=day))
    first = parsed(chief_client.get("/sorties", params={"pilot_id": world.student.id}))
    assert len(cell_texts(first.find("table"))) == 50
    assert first.find("a", rel="prev") is None
    older = first.find("a", rel="next")["href"]
    assert f"pilot_id={world.student.id}" in older and "offset=50" in older
    second = parsed(chief_client.get(older))
    assert len(cell_texts(second.find("table"))) == 5
    assert second.find("a", rel="next") is None
    assert "Sorties 51–55" in second.find(class_="where").get_text()
    newer = second.find("a", rel="prev")["href"]
    assert f"pilot_id={world.student.id}" in newer and "offset=0" in newer


def test_a_student_filters_only_their_own_sorties(student_client, db, world):
    make_sortie(db, world, attempts=1, sign=True)
    make_sortie(db, world, instructor=world.other_instructor, pilot=world.other_student, attempts=1, sign=True)
    assert [r[1] for r in _rows(student_client)] == ["Sam Student"]
    assert _rows(student_client, pilot_id=world.other_student.id) == []
    page = parsed(student_client.get("/sorties", params={"pilot_id": world.other_student.id}))
    assert "No sorties match these filters." in page.get_text()
    assert world.other_student.name not in page.get_text()
