"""Rules through the API, the board and its CSV, calendar feeds, own currency, and who may see what."""
import csv
import io
import re
from datetime import UTC, date, datetime, timedelta

from icalendar import Calendar

from tests.support import cell_texts, make_sortie, parsed, read_text

RULE = {"name": "Touchdowns every 30 days", "applies_to_roles": ["student"], "terminations": ["touchdown"],
        "window_days": 30, "min_count": 1, "warn_days": 7}


def _flown(day: date) -> datetime:
    return datetime(day.year, day.month, day.day, 10, 0, tzinfo=UTC)


def test_chief_pilot_creates_edits_and_deletes_a_rule(chief_client):
    made = chief_client.api("POST", "/api/v1/rules", json=RULE)
    assert made.status_code == 201, made.text
    rule = made.json()
    assert rule["window_days"] == 30 and rule["window_months"] is None
    assert "full-touchdown" in rule["describe"]
    # Setting a window in calendar months replaces the one in days.
    changed = chief_client.api("PATCH", f"/api/v1/rules/{rule['id']}", json={"window_months": 6})
    assert changed.status_code == 200, changed.text
    assert (changed.json()["window_days"], changed.json()["window_months"]) == (None, 6)
    assert chief_client.api("DELETE", f"/api/v1/rules/{rule['id']}").status_code == 204
    assert chief_client.get(f"/api/v1/rules/{rule['id']}").status_code == 404


def test_bad_rules_get_a_422_that_says_why_and_change_nothing(chief_client, world):
    both = chief_client.api("POST", "/api/v1/rules", json=RULE | {"window_months": 6})
    assert both.status_code == 422 and "exactly one" in both.json()["detail"]
    neither = chief_client.api("POST", "/api/v1/rules", json={k: v for k, v in RULE.items() if k != "window_days"})
    assert neither.status_code == 422
    unknown_type = chief_client.api("POST", "/api/v1/rules", json=RULE | {"type_ids": [9999]})
    assert unknown_type.status_code == 422 and "9999" in unknown_type.json()["detail"]
    bad_maneuver = chief_client.api("POST", "/api/v1/rules", json=RULE | {"maneuvers": ["loop"]})
    assert bad_maneuver.status_code == 422
    assert chief_client.get("/api/v1/rules").json() == []


def test_only_a_chief_pilot_changes_rules(instructor_client, chief_client):
    assert instructor_client.api("POST", "/api/v1/rules", json=RULE).status_code == 403
    rule = chief_client.api("POST", "/api/v1/rules", json=RULE).json()
    assert instructor_client.api("PATCH", f"/api/v1/rules/{rule['id']}", json={"min_count": 3}).status_code == 403
    assert instructor_client.api("DELETE", f"/api/v1/rules/{rule['id']}").status_code == 403


def test_rule_made_on_the_page_shows_on_the_board(chief_client, world, db):
    page = chief_client.form_post("/currency/rules", {"name": "Hover autos, 2 calendar months",
                                                      "maneuvers": "hovering", "window": "2", "window_unit": "months",
                                                      "min_count": "1", "warn_days": "10"})
    assert page.status_code == 303
    rules = chief_client.get("/api/v1/rules").json()
    assert [(r["name"], r["window_months"], r["maneuvers"]) for r in rules] == [
        ("Hover autos, 2 calendar months", 2, ["hovering"])]
    refused = chief_client.form_post("/currency/rules", {"name": "No window", "window": "", "min_count": "1",
                                                         "warn_days": "1"})
    assert refused.status_code == 422 and "exactly one" in refused.text


def test_access_to_currency(world, chief_client, instructor_client, student_client, other_student_client, db):
    chief_client.api("POST", "/api/v1/rules", json=RULE)
    make_sortie(db, world, attempts=1, sign=True)  # the instructor flew with the student
    me = student_client.get(f"/api/v1/people/{world.student.id}/currency")
    assert me.status_code == 200 and len(me.json()["rules"]) == 1
    assert instructor_client.get(f"/api/v1/people/{world.student.id}/currency").status_code == 200
    assert chief_client.get(f"/api/v1/people/{world.student.id}/currency").status_code == 200
    assert other_student_client.get(f"/api/v1/people/{world.student.id}/currency").status_code == 404
    assert student_client.get("/api/v1/currency").status_code == 403
    assert instructor_client.get("/api/v1/currency").status_code == 403
    assert student_client.get("/currency").status_code == 403
    assert student_client.get("/currency/board.csv").status_code == 403


def _board_world(chief_client, world, db):
    chief_client.api("POST", "/api/v1/rules", json=RULE)
    chief_client.api("POST", "/api/v1/rules", json={"name": "Instructors: any, 90 days", "applies_to_roles":
                                                    ["instructor"], "window_days": 90, "min_count": 2, "warn_days": 14})
    make_sortie(db, world, attempts=1, sign=True, flown_at=_flown(date(2026, 11, 1)))  # student: until 1 Dec
    make_sortie(db, world, pilot=world.other_student, attempts=1, sign=True, flown_at=_flown(date(2026, 10, 1)))
    make_sortie(db, world, instructor=world.chief, pilot=world.instructor, attempts=2, sign=True,
                flown_at=_flown(date(2026, 10, 20)))


def test_board_sorted_soonest_trouble_first_with_words_and_dates(chief_client, world, db):
    _board_world(chief_client, world, db)
    answer = chief_client.get("/api/v1/currency", params={"as_of": "2026-11-25"})
    rows = [(r["name"], r["rule_name"][:11], r["status"], r["current_until"]) for r in answer.json()["rows"]]
    assert rows == [
        ("Chief Tester", "Instructors", "never", None),
        ("Olga Otherinstructor", "Instructors", "never", None),
        ("Tess Otherstudent", "Touchdowns ", "lapsed", "2026-10-31"),
        ("Sam Student", "Touchdowns ", "due_soon", "2026-12-01"),
        ("Ivo Instructor", "Instructors", "current", "2027-01-18"),
    ]
    page = parsed(chief_client.get("/currency", params={"as_of": "2026-11-25"}))
    grid = page.find("table", id="board-table")
    heads = [read_text(th) for th in grid.find("thead").find_all("th")]
    assert heads[0] == "Pilot" and len(heads) == 3  # one column per rule
    lines = {row[0].split(" ")[0]: row for row in cell_texts(grid)}
    touchdowns = 1 + [h.startswith("Touchdowns") for h in heads[1:]].index(True)
    # One row per pilot; each cell the status in a word and a shape (read as its word), with its date.
    assert lines["Sam"][touchdowns] == "Due soon until 1 Dec 2026"
    assert lines["Tess"][touchdowns] == "Lapsed since 1 Nov 2026"
    assert lines["Ivo"][3 - touchdowns] == "Current until 18 Jan 2027"
    assert lines["Ivo"][touchdowns] == "does not apply"
    order = [row[0] for row in cell_texts(grid)]
    assert [name.split(" ")[0] for name in order] == ["Chief", "Olga", "Tess", "Sam", "Ivo"]
    shapes = [s.get_text() for s in grid.find("tbody").find_all("tr")[3].find_all(class_="shape")]
    assert shapes == ["◐"]
    # A pilot's name opens their currency page, which leads on to their progress file.
    link = grid.find("a", string="Sam Student")["href"]
    assert link == f"http://testserver/currency/people/{world.student.id}"
    person = parsed(chief_client.get(link))
    assert person.find("a", href=f"http://testserver/people/{world.student.id}/progress") is not None


def test_csv_holds_every_cell_shown(chief_client, world, db):
    _board_world(chief_client, world, db)
    for filters in ({"as_of": "2026-11-25"}, {"as_of": "2026-11-25", "role": "student"},
                    {"as_of": "2026-12-05", "status": "lapsed"}):
        grid = parsed(chief_client.get("/currency", params=filters)).find("table", id="board-table")
        # The full rule name is in each column heading's "what it asks".
        full = [th.find(popover=True).find("strong").get_text() for th in grid.find("thead").find_all("th")[1:]]
        shown = set()
        for line in grid.find("tbody").find_all("tr"):
            name = line.find("th").find("a").get_text()
            for rule, cell in zip(full, line.find_all("td"), strict=True):
                if read_text(cell) != "does not apply":
                    shown.add((name, rule, cell.find(class_="currency").get_text(" ", strip=True).split(" ")[1]))
        exported = chief_client.get("/currency/board.csv", params=filters)
        assert exported.headers["content-type"].startswith("text/csv")
        rows = list(csv.reader(io.StringIO(exported.text.lstrip("\ufeff"))))
        assert rows[0][0] == "Pilot"
        assert {(r[0], r[2], r[3].split(" ")[0]) for r in rows[1:]} == shown and shown, filters
        assert len(rows) - 1 == len(shown)


def test_board_pages_pilots_and_filters_stay_in_the_address(chief_client, world, db):
    _board_world(chief_client, world, db)
    students = parsed(chief_client.get("/currency", params={"as_of": "2026-11-25", "role": "student"}))
    assert [r[0].split(" ")[0] for r in cell_texts(students.find("table", id="board-table"))] == ["Tess", "Sam"]
    assert students.find("select", id="f-role").find("option", selected=True)["value"] == "student"
    lapsed = parsed(chief_client.get("/currency", params={"as_of": "2026-11-25", "status": "lapsed"}))
    assert [r[0].split(" ")[0] for r in cell_texts(lapsed.find("table", id="board-table"))] == ["Tess"]


def _new_feed(client, whose: str) -> str:
    page = client.form_post("/currency/calendar", {"whose": whose})
    assert page.status_code == 200
    return re.search(r'class="feed-url">http://testserver([^<]+)<', page.text).group(1)


def test_calendar_feed_parses_and_holds_the_due_dates(chief_client, anonymous, world, db):
    _board_world(chief_client, world, db)
    url = _new_feed(chief_client, "school")
    feed = anonymous.get(url, params={"as_of": "2026-11-25"})  # no session: the secret is the credential
    assert feed.status_code == 200 and feed.headers["content-type"].startswith("text/calendar")
    calendar = Calendar.from_ical(feed.content)  # the icalendar library reads it back (RFC 5545)
    events = {(str(e["summary"]), e["dtstart"].dt) for e in calendar.walk("VEVENT")}
    assert ("Last day current: Touchdowns every 30 days (Sam Student)", date(2026, 12, 1)) in events
    assert ("Last day current: Instructors: any, 90 days (Ivo Instructor)", date(2027, 1, 18)) in events
    assert len(events) == 3  # the never-done rows have no date
    # Each reminder comes as far ahead as its rule's warning lead time (RFC 5545 VALARM, relative TRIGGER).
    reminders = {str(e["summary"]): [a["trigger"].dt for a in e.walk("VALARM")] for e in calendar.walk("VEVENT")}
    assert reminders["Last day current: Touchdowns every 30 days (Sam Student)"] == [timedelta(days=-7)]
    assert reminders["Last day current: Instructors: any, 90 days (Ivo Instructor)"] == [timedelta(days=-14)]


def test_revoked_link_is_gone_and_students_get_only_their_own(student_client, anonymous, world, db, chief_client):
    chief_client.api("POST", "/api/v1/rules", json=RULE)
    make_sortie(db, world, attempts=1, sign=True, flown_at=_flown(date(2026, 11, 1)))
    url = _new_feed(student_client, "me")
    events = Calendar.from_ical(anonymous.get(url, params={"as_of": "2026-11-25"}).content).walk("VEVENT")
    assert [str(e["summary"]) for e in events] == ["Last day current: Touchdowns every 30 days (Sam Student)"]
    refused = student_client.api("POST", "/api/v1/calendar-feeds", json={"person_id": None})
    assert refused.status_code == 403
    (feed,) = student_client.get("/api/v1/calendar-feeds").json()
    assert student_client.form_post(f"/currency/calendar/{feed['id']}/revoke").status_code == 303
    assert anonymous.get(url).status_code == 404
    assert anonymous.get("/calendar/cal_not-a-real-secret.ics").status_code == 404


def test_own_currency_on_the_home_page_and_its_fragment(student_client, chief_client, world, db):
    chief_client.api("POST", "/api/v1/rules", json=RULE)
    make_sortie(db, world, attempts=1, sign=True, flown_at=datetime.now(UTC))
    home = student_client.get("/")
    assert re.search(rf'hx-get="[^"]*/currency/people/{world.student.id}"', home.text)
    fragment = student_client.get(f"/currency/people/{world.student.id}", headers={"HX-Request": "true"})
    assert fragment.status_code == 200
    assert "Touchdowns every 30 days" in fragment.text and "● Current" in " ".join(fragment.text.split()).replace(
        '<span class="shape" aria-hidden="true">●</span>', "●")
    assert "to stay current" in fragment.text
    assert student_client.get(f"/currency/people/{world.other_student.id}").status_code == 404
