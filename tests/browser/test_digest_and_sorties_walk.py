"""The chief pilot's Monday morning on the 1024x768 tablet: the safety digest's presets swap the digest in
place and keep the period in the address, the month chart opens a month's attempts, and the sortie list's
filters and pages keep what was chosen.

Anchor: issue 13; htmx 2 documentation (hx-get, hx-target, hx-push-url); axe-core 4.11 (no violations).
"""
from datetime import UTC, datetime, timedelta

import pytest
from playwright.sync_api import expect

from server.people import service as people
from tests.browser.conftest import axe_violations, fits_the_width, nav_on_one_line, screenshot, sign_in
from tests.safety.test_digest import CLEAN, FAST, LOW_RPM, flown
from tests.support import make_sortie

pytestmark = pytest.mark.browser


@pytest.fixture
def page(new_context):
    return new_context(bypass_csp=True).new_page()


def test_the_digest_presets_and_the_month_chart(page, db, world, axe_path):
    today = people.school_today(db)
    now = datetime(today.year, today.month, today.day, 9, tzinfo=UTC)
    flown(db, world, [LOW_RPM, FAST, CLEAN], when=now - timedelta(days=2))
    flown(db, world, [CLEAN, FAST], when=now - timedelta(days=20))
    flown(db, world, [CLEAN, CLEAN, LOW_RPM, CLEAN], when=now - timedelta(days=200))
    sign_in(page, world.chief.email)
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Safety digest").tap()
    periods = page.get_by_role("navigation", name="Period")
    expect(periods.get_by_role("link", name="Last 30 days")).to_have_attribute("aria-current", "page")
    expect(page.locator("#digest .period strong")).to_have_text("5")
    assert nav_on_one_line(page) and fits_the_width(page)
    screenshot(page, "safety-digest")
    assert axe_violations(page, axe_path) == []

    page.evaluate("window.sameDocument = true")
    periods.get_by_role("link", name="Last 7 days").tap()
    expect(page.locator("#digest .period strong")).to_have_text("3")
    expect(page.get_by_role("navigation", name="Period").get_by_role("link", name="Last 7 days")).to_have_attribute(
        "aria-current", "page")
    page.wait_for_url("**/safety?period=7d")  # the period stays in the address, pushed once htmx settles
    assert page.evaluate("window.sameDocument === true")
    page.get_by_role("navigation", name="Period").get_by_role("link", name="Last 12 months").tap()
    expect(page.locator("#digest .period strong")).to_have_text("9")
    screenshot(page, "safety-digest-12-months")
    assert axe_violations(page, axe_path) == []

    recent = (now - timedelta(days=2)).strftime("%b %Y")
    flagged = {(now - timedelta(days=2)).strftime("%b %Y"): 2}  # LOW_RPM and FAST
    older = (now - timedelta(days=20)).strftime("%b %Y")
    flagged[older] = flagged.get(older, 0) + 1  # FAST
    month = page.locator("svg.months-chart a").filter(has=page.locator("title", has_text=recent))
    month.tap()
    page.wait_for_url("**/safety/attempts?**")
    expect(page.get_by_role("row")).to_have_count(1 + flagged[recent])  # the header, and the month's flagged
    screenshot(page, "safety-attempts")
    assert axe_violations(page, axe_path) == []


def test_the_sortie_list_filters_and_pages(page, db, world, axe_path):
    start = datetime(2026, 6, 1, 9, tzinfo=UTC)
    for day in range(52):
        make_sortie(db, world, attempts=1, sign=day % 2 == 0, flown_at=start + timedelta(days=day))
    make_sortie(db, world, instructor=world.other_instructor, pilot=world.other_student, attempts=1,
                flown_at=start + timedelta(days=60))
    sign_in(page, world.chief.email)
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Sorties").tap()
    screenshot(page, "sortie-list")
    assert fits_the_width(page) and axe_violations(page, axe_path) == []
    page.get_by_label("Pilot").select_option(label=world.student.name)
    page.get_by_label("Record").select_option(label="Draft")
    page.get_by_role("button", name="Show").tap()
    expect(page.locator("table.list tbody tr")).to_have_count(26)
    assert f"pilot_id={world.student.id}" in page.url and "state=draft" in page.url
    expect(page.get_by_label("Pilot")).to_have_value(str(world.student.id))
    page.get_by_role("button", name="Clear").or_(page.get_by_role("link", name="Clear")).tap()
    expect(page.locator("table.list tbody tr")).to_have_count(50)
    page.get_by_role("link", name="Older sorties →").tap()
    expect(page.locator("table.list tbody tr")).to_have_count(3)
    page.get_by_role("link", name="← Newer sorties").tap()
    expect(page.locator("table.list tbody tr")).to_have_count(50)
    screenshot(page, "sortie-list-page-1")
