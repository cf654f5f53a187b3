"""Importing earlier records in a real browser on the tablet: choose the file, check it (the mapping
and every problem shown in place, without a reload), correct a column, import the clean rows, and
follow the batch to its records. The CSP blocks nothing and axe-core finds no violation.

Anchors: htmx 2 documentation (hx-post with hx-encoding="multipart/form-data"); W3C CSP Level 3;
axe-core 4 rules for WCAG 2.1 AA.
"""
import os
from datetime import date, timedelta

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import axe_violations, sign_in, watch
from tests.imports.test_import_api import ATTEMPT_HEADER, attempt_row
from tests.imports.test_reading import csv_bytes

pytestmark = pytest.mark.browser
SHOTS = os.environ.get("FLAREBOOK_SCREENSHOTS")


def sheet(tmp_path):
    """A school's own headings: 'Pupil' is not one Flarebook guesses, so the person maps it."""
    header = ["Pupil" if h == "Student" else h for h in ATTEMPT_HEADER]
    day = date.today() - timedelta(days=4)
    rows = [header, attempt_row(day), attempt_row(day, touchdown="fast"), attempt_row(day, when="15:00")]
    path = tmp_path / "earlier-records.csv"
    path.write_bytes(csv_bytes(rows, delimiter=";", bom=True))
    return path


def test_the_chief_checks_maps_and_imports_the_clean_rows(page, world, tmp_path):
    errors = watch(page)
    sign_in(page, world.chief.email)
    page.goto("/setup")
    page.get_by_role("link", name="Import earlier records").tap()
    page.wait_for_url("**/setup/imports")
    page.evaluate("window.sameDocument = true")
    page.get_by_label("File").set_input_files(str(sheet(tmp_path)))
    page.get_by_role("button", name="Check the file").tap()
    problems = page.locator("table.problems tbody tr")
    expect(problems.first).to_contain_text("No column gives the pilot")
    page.get_by_label("Pilot (email or name)").select_option("Pupil")
    page.get_by_role("button", name="Check the file").tap()
    expect(problems).to_have_count(1)
    expect(problems.first).to_contain_text("'fast' is not a number")
    expect(page.locator(".tally-ok")).to_contain_text("2 of 3 rows can be imported")
    if SHOTS:
        page.screenshot(path=os.path.join(SHOTS, "import-checked.png"), full_page=True)
    page.get_by_role("button", name="Import only the 2 clean rows").tap()
    expect(page.locator(".import-done")).to_contain_text("2 sorties with 2 practice autorotations")
    assert page.evaluate("window.sameDocument === true"), "a step reloaded the whole page"
    if SHOTS:
        page.screenshot(path=os.path.join(SHOTS, "import-done.png"), full_page=True)
    page.locator(".import-done a").tap()
    page.wait_for_url("**/setup/imports/*")
    expect(page.locator("table.list").last.locator("tbody tr")).to_have_count(2)
    if SHOTS:
        page.screenshot(path=os.path.join(SHOTS, "import-batch.png"), full_page=True)
    page.locator("table.list").last.locator("a").first.tap()
    page.wait_for_url("**/sorties/*")
    expect(page.get_by_text("Transcribed from earlier records").first).to_be_visible()
    if SHOTS:
        page.screenshot(path=os.path.join(SHOTS, "import-sortie.png"), full_page=True)
    assert page.evaluate("window.cspViolations") == []
    assert errors == []


def test_no_accessibility_violations(new_context, world, tmp_path, axe_path):
    page = new_context(bypass_csp=True).new_page()  # axe-core is injected as a script
    sign_in(page, world.chief.email)
    page.goto("/setup/imports")
    assert axe_violations(page, axe_path) == []
    page.get_by_label("File").set_input_files(str(sheet(tmp_path)))
    page.get_by_role("button", name="Check the file").tap()
    expect(page.locator("table.problems")).to_be_visible()
    assert axe_violations(page, axe_path) == []
