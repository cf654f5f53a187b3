"""A chief pilot reads the readiness board grid and opens a pilot from it; a student reads their progress
file and acknowledges a signed record from it; all on the 1024x768 tablet, with axe-core on each page.

Anchor: issue 13; WAI-ARIA 1.2 (a table's row and column headers name each cell); the HTML popover
attribute (a rule's full text on a tap, no script); axe-core 4.11 (no violations).
"""
from datetime import UTC, date, datetime, timedelta

import pytest
from fastapi.testclient import TestClient
from playwright.sync_api import expect

from server.people import service as people
from server.people.models import Person
from tests.browser.conftest import axe_violations, fits_the_width, nav_on_one_line, screenshot, sign_in
from tests.progress.helpers import GOOD, POOR, fly
from tests.support import make_sortie

pytestmark = pytest.mark.browser

RULES = [
    {"name": "Students: touchdown practice every 30 days", "applies_to_roles": ["student"],
     "terminations": ["touchdown"], "window_days": 30, "min_count": 1, "warn_days": 7},
    {"name": "Instructors: any autorotation in 90 days", "applies_to_roles": ["instructor"], "window_days": 90,
     "min_count": 2, "warn_days": 14},
    {"name": "Everyone flying: hovering autorotation every 60 days", "maneuvers": ["hovering"], "window_days": 60,
     "min_count": 1, "warn_days": 10},
]


@pytest.fixture
def page(new_context):
    return new_context(bypass_csp=True).new_page()


def _rules(app, world):
    with app.state.sessions() as session:
        token = people.issue_token(session, person=session.get(Person, world.chief.id))
        session.commit()
    client = TestClient(app, headers={"Authorization": f"Bearer {token}"})
    for rule in RULES:
        assert client.post("/api/v1/rules", json=rule).status_code == 201


def test_the_chief_reads_the_board_grid_and_opens_a_pilot(page, app, db, world, axe_path):
    _rules(app, world)
    today = people.school_today(db)
    make_sortie(db, world, attempts=1, sign=True, flown_at=datetime.combine(today - timedelta(days=25),
                                                                          datetime.min.time(), UTC))
    make_sortie(db, world, pilot=world.other_student, attempts=1, sign=True,
                flown_at=datetime.combine(today - timedelta(days=45), datetime.min.time(), UTC))
    sign_in(page, world.chief.email)
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Readiness").tap()
    grid = page.locator("#board-table")
    expect(grid.get_by_role("columnheader")).to_have_count(1 + 3)
    # One row per pilot: the five flying people of the test school, soonest trouble first.
    expect(grid.locator("tbody tr")).to_have_count(5)
    sam = grid.get_by_role("row").filter(has=page.get_by_role("link", name=world.student.name))
    expect(sam).to_contain_text("Due soon")
    assert nav_on_one_line(page) and fits_the_width(page)
    screenshot(page, "readiness-board")
    assert axe_violations(page, axe_path) == []
    # A rule's full text on a tap.
    grid.get_by_role("button", name="Students: touchdown practice every 30 days: what it asks").tap()
    popover = page.locator("#board-table [popover]:popover-open")
    expect(popover).to_be_visible()
    expect(popover).to_contain_text("Students: touchdown practice every 30 days")
    expect(popover).to_contain_text("in 30 days; warning 7 days ahead.")
    screenshot(page, "readiness-board-rule")
    popover.get_by_role("button", name="Close").tap()
    expect(popover).to_be_hidden()
    # Filters stay in the address.
    page.get_by_label("Role").select_option(label="Student")
    page.get_by_role("button", name="Show").tap()
    expect(grid.locator("tbody tr")).to_have_count(2)
    assert "role=student" in page.url
    # The pilot's name opens their currency, which leads on to their progress file.
    grid.get_by_role("link", name=world.student.name).tap()
    expect(page.get_by_role("heading", level=1)).to_have_text(f"Currency: {world.student.name}")
    screenshot(page, "currency-person")
    assert axe_violations(page, axe_path) == []
    page.get_by_role("link", name="Progress file").tap()
    expect(page.get_by_role("heading", level=1)).to_have_text(f"Progress file: {world.student.name}")


def test_a_student_reads_their_file_and_acknowledges_a_record(page, db, world, axe_path):
    start = datetime.now(UTC) - timedelta(days=40)
    for day in range(0, 24, 2):
        fly(db, world, [POOR, GOOD, GOOD] if day < 12 else [GOOD, GOOD, GOOD], day=day, start=start)
    waiting = fly(db, world, [GOOD, GOOD], day=30, start=start)
    sign_in(page, world.student.email)
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Progress").tap()
    section = page.get_by_role("region", name="Waiting for your acknowledgement")
    expect(section).to_be_visible()
    expect(page.locator("figure.chart figcaption").first).to_contain_text("Your touchdowns")
    assert fits_the_width(page)
    screenshot(page, "progress-file")
    assert axe_violations(page, axe_path) == []
    newest = section.get_by_role("listitem").first
    expect(newest.get_by_role("link")).to_contain_text(waiting.flown_at.strftime("%d %b %Y"))
    expect(section.locator(f'a[href$="/sorties/{waiting.id}"]')).to_have_count(1)
    newest.get_by_role("button", name="I have read this record").tap()
    page.wait_for_url(f"**/people/{world.student.id}/progress#waiting-h")
    still = page.get_by_role("region", name="Waiting for your acknowledgement")
    expect(still.locator(f'a[href$="/sorties/{waiting.id}"]')).to_have_count(0)
    expect(still.get_by_role("listitem").first).to_be_visible()  # the older records still wait
    page.goto(f"/sorties/{waiting.id}")
    expect(page.get_by_text("Signed and acknowledged").first).to_be_visible()


def test_a_school_of_40_pilots_and_6_rules_reads_on_one_page_at_1024_px(page, app, db, world, axe_path):
    for i in range(35):  # with the test school's five flying people: 40 pilots
        people.create_person(db, name=f"Pilot {i + 1:02d} (invented)", email=f"pilot{i}@school.example",
                             roles=["student"] if i % 3 else ["instructor"], password="test-password-1")
    db.commit()
    _rules(app, world)
    with app.state.sessions() as session:
        token = people.issue_token(session, person=session.get(Person, world.chief.id))
        session.commit()
    client = TestClient(app, headers={"Authorization": f"Bearer {token}"})
    for name, extra in (("Everyone: 360° turn autorotation every 90 days", {"maneuvers": ["turn_360"]}),
                        ("Everyone: power recovery every 45 days", {"terminations": ["power_recovery"]}),
                        ("Everyone: three autorotations scoring 70 in 120 days", {"min_score": 70, "min_count": 3})):
        rule = {"name": name, "window_days": 90, "min_count": 1, "warn_days": 14} | extra
        assert client.post("/api/v1/rules", json=rule).status_code == 201
    sign_in(page, world.chief.email)
    page.goto("/currency")
    grid = page.locator("#board-table")
    expect(grid.get_by_role("columnheader")).to_have_count(1 + 6)
    expect(grid.locator("tbody tr")).to_have_count(40)
    expect(page.get_by_role("navigation", name="Board pages")).to_have_count(0)  # no paging for 40
    assert fits_the_width(page), "the grid runs off the right edge at 1024 px"
    heights = grid.locator("tbody tr").evaluate_all("rows => rows.map(r => r.getBoundingClientRect().height)")
    assert max(heights) <= 52, f"a row takes {max(heights)} px"
    screenshot(page, "readiness-board-40-pilots")
    assert axe_violations(page, axe_path) == []
