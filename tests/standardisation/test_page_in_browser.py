"""The standardisation page in a real browser on the tablet: the filter swaps the report in place,
each part of the chart opens its attempts, the CSP blocks nothing, and axe-core finds no violation.

Anchors: htmx 2 documentation (hx-get, hx-target, hx-push-url); W3C CSP Level 3
(securitypolicyviolation events); axe-core 4 rules for WCAG 2.1 AA.
"""
import os

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import axe_violations, sign_in, watch
from tests.standardisation.test_report import counts, scenario  # noqa: F401 (fixture)

pytestmark = pytest.mark.browser
SHOTS = os.environ.get("FLAREBOOK_SCREENSHOTS")  # a folder to keep screenshots in, for a person to look at


def test_the_chief_reads_the_report_filters_it_and_opens_the_attempts_behind_a_bar(page, world, scenario):
    errors = watch(page)
    sign_in(page, world.chief.email)
    page.get_by_role("link", name="Standardisation").tap()
    page.wait_for_url("**/standardisation")
    if SHOTS:
        page.screenshot(path=os.path.join(SHOTS, "standardisation-first.png"), full_page=True)
    page.get_by_label("From", exact=True).fill("2026-09-01")
    page.get_by_label("To", exact=True).fill("2026-11-30")
    page.evaluate("window.sameDocument = true")
    page.get_by_role("button", name="Show").tap()
    expect(page.locator("#report table.standardisation").first).to_be_visible()
    assert page.evaluate("window.sameDocument === true"), "the filter reloaded the whole page"
    page.wait_for_url("**/standardisation?from=2026-09-01**")  # the filtered view has its own address
    if SHOTS:
        page.screenshot(path=os.path.join(SHOTS, "standardisation.png"), full_page=True)
    rows = page.locator("#report table.standardisation").first.locator("tbody tr")
    expect(rows).to_have_count(3)  # two instructors and the school
    lenient = counts(scenario[world.instructor.id])["lenient"]
    page.locator(f'svg.standardisation-chart a[aria-label^="{world.instructor.name}:"][aria-label*="lenient"]').tap()
    page.wait_for_url("**/standardisation/attempts?**")
    expect(page.locator("table.list tbody tr")).to_have_count(lenient)
    expect(page.locator(".outcome-lenient")).to_have_count(lenient)
    if SHOTS:
        page.screenshot(path=os.path.join(SHOTS, "standardisation-attempts.png"), full_page=True)
    page.get_by_role("link", name="Back to standardisation").tap()
    page.get_by_label("Maneuver").select_option("turn_180")
    page.get_by_role("button", name="Show").tap()
    expect(page.locator("#report table.standardisation").first.locator("tbody tr")).to_have_count(2)
    assert page.evaluate("window.cspViolations") == []
    assert errors == []


def test_no_accessibility_violations(new_context, world, scenario, axe_path):
    page = new_context(bypass_csp=True).new_page()  # axe-core is injected as a script
    sign_in(page, world.chief.email)
    page.goto("/standardisation?from=2026-09-01&to=2026-11-30")
    assert axe_violations(page, axe_path) == []
    page.goto(f"/standardisation/attempts?from=2026-09-01&to=2026-11-30&show=graded&instructor_id={world.instructor.id}")
    assert axe_violations(page, axe_path) == []
