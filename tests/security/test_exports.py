"""Files handed out carry no formula and no broken calendar line.

Yardsticks: OWASP "CSV Injection" (cells starting with =, +, -, @, tab or a line break are run by
spreadsheets) with RFC 4180 for the file itself (Python's csv module reads it back); RFC 5545
section 3.3.11 (TEXT escapes backslash, semicolon, comma and line breaks), read back by the
icalendar library.
"""
import csv
import io
import re

import pytest
from icalendar import Calendar
from icalendar.parser import Contentline
from sqlalchemy import update

from server.csv_export import FORMULA_STARTS, csv_text, neutral_cell
from server.people.models import Person
from tests.support import make_sortie

FORMULAS = ['=HYPERLINK("http://example.invalid","x")', "+1+2", "-3+4", "@SUM(A1:A2)", "\t=1", "\r=2"]


@pytest.mark.parametrize("text", FORMULAS)
def test_text_that_a_spreadsheet_would_run_is_shown_as_text(text):
    # OWASP CSV Injection: prefix with an apostrophe, which spreadsheets show and do not run.
    assert neutral_cell(text) == "'" + text
    rows = list(csv.reader(io.StringIO(csv_text(["a"], [[text]]), newline="")))
    assert rows == [["a"], ["'" + text]]  # RFC 4180: read back whole, even with a line break inside


def test_numbers_stay_numbers_and_plain_text_is_untouched():
    assert neutral_cell(-12.5) == -12.5 and neutral_cell(0) == 0
    assert neutral_cell("O'Dell, Jr.") == "O'Dell, Jr." and neutral_cell(None) == ""
    assert csv_text(["n"], [[-1]]).endswith("\r\n-1\r\n")  # RFC 4180 ends lines with CRLF


def _cells(text: str) -> list[str]:
    return [cell for row in csv.reader(io.StringIO(text.lstrip("\ufeff"))) for cell in row]


def _assert_no_formula(text: str) -> None:
    cells = _cells(text)
    assert cells
    for cell in cells:
        assert not cell.startswith(FORMULA_STARTS) or re.fullmatch(r"-?\d+(\.\d+)?", cell), cell


def test_every_csv_the_app_writes_neutralises_formula_cells(chief_client, world, db):
    db.execute(update(Person).where(Person.id == world.student.id).values(name=FORMULAS[0]))
    db.execute(update(Person).where(Person.id == world.instructor.id).values(name="@cmd|' /C calc'!A0"))
    db.commit()
    rule = {"name": "-2+3 touchdowns", "applies_to_roles": ["student", "instructor"], "terminations": ["touchdown"],
            "window_days": 30, "min_count": 1, "warn_days": 7}
    assert chief_client.api("POST", "/api/v1/rules", json=rule).status_code == 201
    make_sortie(db, world, attempts=1, sign=True)
    board = chief_client.get("/currency/board.csv", params={"as_of": "2026-11-25"})
    assert board.status_code == 200
    _assert_no_formula(board.text)
    assert "'" + FORMULAS[0] in _cells(board.text) and "'-2+3 touchdowns" in _cells(board.text)
    digest = chief_client.get("/safety/digest.csv", params={"date_from": "2026-11-01", "date_to": "2026-11-30"})
    assert digest.status_code == 200
    _assert_no_formula(digest.text)
    assert "'@cmd|' /C calc'!A0" in _cells(digest.text)


def _feed_url(client) -> str:
    page = client.form_post("/currency/calendar", {"whose": "me"})
    assert page.status_code == 200
    return re.search(r'class="feed-url">http://testserver([^<]+)<', page.text).group(1)


@pytest.mark.parametrize("name", ["O'Dell, Jr.", "Ana; the second", "First line\nsecond line", "Back\\slash"])
def test_the_calendar_name_is_escaped_as_rfc_5545_text(student_client, anonymous, world, db, name):
    db.execute(update(Person).where(Person.id == world.student.id).values(name=name))
    db.commit()
    feed = anonymous.get(_feed_url(student_client))
    assert feed.status_code == 200, feed.text
    unfolded = feed.content.replace(b"\r\n ", b"")  # RFC 5545 3.1: a folded line continues after CRLF + space
    line = next(line for line in unfolded.split(b"\r\n") if line.startswith(b"X-WR-CALNAME"))
    # RFC 5545 3.3.11: ESCAPED-CHAR = "\\" / "\;" / "\," / "\N" / "\n"; no raw comma, semicolon or break.
    value = line.split(b":", 1)[1].decode()
    assert not re.search(r"(?<!\\)[,;]", value.replace("\\\\", "")) and "\n" not in value
    Calendar.from_ical(feed.content)  # the whole feed still parses
    assert Contentline(line.decode()).parts()[2] == f"Currency due dates: {name}"  # icalendar unescapes it
