"""Today's board is kept in memory between requests: every change it shows is there on the next request,
in this app and in another process's app on the same database."""
from datetime import UTC, datetime, time, timedelta

import pytest
from fastapi.testclient import TestClient

from server.app import create_app
from server.currency import board_cache
from server.fleet import service as fleet
from server.fleet.schemas import TypeUpdate
from server.people import service as people
from server.people.models import Person
from tests.conftest import sign_in
from tests.support import cell_texts, make_sortie, parsed

RULE = {"name": "Touchdowns every 30 days", "applies_to_roles": ["student"], "terminations": ["touchdown"],
        "window_days": 30, "min_count": 1, "warn_days": 7}


def _cells(client) -> dict[tuple[str, str], tuple[str, int, str]]:
    rows = client.get("/api/v1/currency").json()["rows"]
    return {(r["name"], r["rule_name"]): (r["status"], r["needed"], r["remedy"]) for r in rows}


def _recently(db, days_ago: int) -> datetime:
    day = people.school_today(db) - timedelta(days=days_ago)
    return datetime.combine(day, time(12, 0), tzinfo=people.school_zone(db)).astimezone(UTC)


@pytest.fixture
def rule(chief_client, world):
    made = chief_client.api("POST", "/api/v1/rules", json=RULE)
    assert made.status_code == 201, made.text
    return made.json()


def test_a_signature_shows_at_once_on_the_kept_board(chief_client, world, db, rule):
    key = ("Sam Student", RULE["name"])
    assert _cells(chief_client)[key][0] == "never"
    assert _cells(chief_client)[key][0] == "never"  # asked again: the kept board
    make_sortie(db, world, attempts=1, sign=True, flown_at=_recently(db, 3))
    assert _cells(chief_client)[key][0] == "current"
    page = parsed(chief_client.get("/currency"))
    sam = next(row for row in cell_texts(page.find("table", id="board-table")) if row[0].startswith("Sam"))
    assert sam[1].startswith("Current until")


def test_rule_edits_and_removal_show_at_once(chief_client, world, db, rule):
    make_sortie(db, world, attempts=1, sign=True, flown_at=_recently(db, 3))
    key = ("Sam Student", RULE["name"])
    assert _cells(chief_client)[key][:2] == ("current", 0)
    assert chief_client.api("PATCH", f"/api/v1/rules/{rule['id']}", json={"min_count": 3}).status_code == 200
    assert _cells(chief_client)[key][:2] == ("lapsed", 2)
    assert chief_client.api("PATCH", f"/api/v1/rules/{rule['id']}", json={"name": "Touchdowns, renamed"}).status_code == 200
    assert ("Sam Student", "Touchdowns, renamed") in _cells(chief_client)
    assert chief_client.api("DELETE", f"/api/v1/rules/{rule['id']}").status_code == 204
    assert _cells(chief_client) == {}
    assert "Touchdowns" not in chief_client.get("/currency").text


def test_a_rule_edit_that_leaves_the_facts_alone_still_changes_the_status(chief_client, world, db, rule):
    """Statuses are kept for the day by their facts: a longer warning changes the status of the same facts."""
    make_sortie(db, world, attempts=1, sign=True, flown_at=_recently(db, 3))
    key = ("Sam Student", RULE["name"])
    assert _cells(chief_client)[key][0] == "current"  # current for 27 more days, warned 7 days ahead
    assert chief_client.api("PATCH", f"/api/v1/rules/{rule['id']}", json={"warn_days": 28}).status_code == 200
    status, needed, remedy = _cells(chief_client)[key]
    assert (status, needed) == ("due_soon", 0) and remedy.startswith("Due soon")
    page = parsed(chief_client.get("/currency"))
    sam = next(row for row in cell_texts(page.find("table", id="board-table")) if row[0].startswith("Sam"))
    assert sam[1].startswith("Due soon")


def test_roles_names_activity_and_type_names_show_at_once(chief_client, world, db, rule):
    assert ("Ivo Instructor", RULE["name"]) not in _cells(chief_client)
    chief = db.get(Person, world.chief.id)
    ivo = db.get(Person, world.instructor.id)
    people.update_person(db, person=ivo, actor=chief, roles=["instructor", "student"])
    db.commit()
    assert _cells(chief_client)[("Ivo Instructor", RULE["name"])][0] == "never"
    people.update_person(db, person=ivo, actor=chief, name="Ivo Renamed")
    db.commit()
    assert ("Ivo Renamed", RULE["name"]) in _cells(chief_client)
    assert "Ivo Renamed" in chief_client.get("/currency").text
    people.update_person(db, person=ivo, actor=chief, active=False)
    db.commit()
    assert {name for name, _ in _cells(chief_client)} == {"Sam Student", "Tess Otherstudent"}
    # A rule naming a helicopter type says its designation in every remedy.
    typed = chief_client.api("POST", "/api/v1/rules", json=RULE | {"name": "On the type", "type_ids": [world.helicopter.id]})
    assert typed.status_code == 201, typed.text
    before = _cells(chief_client)[("Sam Student", "On the type")][2]
    fleet.change_type(db, row=db.get(type(world.helicopter), world.helicopter.id),
                      changes=TypeUpdate(designation="FB-9 renamed"), actor=chief)
    db.commit()
    after = _cells(chief_client)[("Sam Student", "On the type")][2]
    assert "FB-9 renamed" in after and after != before


def test_another_process_sees_a_change_made_through_this_one(app, settings, chief_client, world, db, rule):
    """Two apps on one database stand for two server processes: each keeps its own boards in memory."""
    other = create_app(settings)
    try:
        other_client = sign_in(other, world.chief.email)
        key = ("Sam Student", RULE["name"])
        assert _cells(other_client)[key][0] == _cells(chief_client)[key][0] == "never"
        make_sortie(db, world, attempts=1, sign=True, flown_at=_recently(db, 3))  # neither app's request
        assert _cells(other_client)[key][0] == "current"
        assert chief_client.api("PATCH", f"/api/v1/rules/{rule['id']}", json={"min_count": 2}).status_code == 200
        assert _cells(other_client)[key][0] == "lapsed"
        assert _cells(chief_client)[key][0] == "lapsed"
    finally:
        other.state.engine.dispose()


def test_the_kept_board_comes_compressed_or_plain_as_asked(chief_client, world, db, rule):
    make_sortie(db, world, attempts=1, sign=True, flown_at=_recently(db, 3))
    packed = chief_client.get("/api/v1/currency", headers={"Accept-Encoding": "gzip"})
    plain = chief_client.get("/api/v1/currency", headers={"Accept-Encoding": "identity"})
    assert packed.headers["content-encoding"] == "gzip" and "content-encoding" not in plain.headers
    assert packed.json() == plain.json() and len(plain.json()["rows"]) == 2
    # Another day is evaluated from the history and never kept.
    past = (people.school_today(db) - timedelta(days=60)).isoformat()
    assert {r["status"] for r in chief_client.get("/api/v1/currency", params={"as_of": past}).json()["rows"]} == {"never"}


def test_a_row_written_without_the_services_is_not_hidden_by_a_kept_board(chief_client, world, db, rule):
    """The token is what keeps a board: without its row (a table emptied by hand) nothing is kept."""
    assert _cells(chief_client)[("Sam Student", RULE["name"])][0] == "never"
    db.execute(board_cache.BoardVersion.__table__.delete())
    db.commit()
    assert board_cache.token(db) is None
    make_sortie(db, world, attempts=1, sign=True, flown_at=_recently(db, 3))
    assert board_cache.token(db) is not None  # the signature wrote one again
    assert _cells(chief_client)[("Sam Student", RULE["name"])][0] == "current"
