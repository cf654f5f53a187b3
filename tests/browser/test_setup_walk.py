"""A chief pilot brings a new student in from the browser on the 1024x768 tablet: adds them, enrols
them in a program with their usual instructor, and the student signs in to their own progress file.

Anchor: issue 13 ("a chief pilot runs the school from the browser alone"); axe-core 4.11 (no violations)
on each page of the walk.
"""
import pytest
from playwright.sync_api import expect

from tests.browser.conftest import axe_violations, fits_the_width, nav_on_one_line, screenshot, sign_in

pytestmark = pytest.mark.browser


@pytest.fixture
def page(new_context):
    """axe-core is injected as a script, which the content security policy would rightly block."""
    return new_context(bypass_csp=True).new_page()


def test_a_chief_pilot_adds_a_student_and_enrols_them(page, world, db, chief_program, axe_path):
    sign_in(page, world.chief.email)
    assert nav_on_one_line(page)
    nav = page.get_by_role("navigation", name="Main")
    nav.get_by_role("link", name="Setup").tap()
    expect(nav.get_by_role("link", name="Setup")).to_have_attribute("aria-current", "page")
    screenshot(page, "setup-home")
    assert axe_violations(page, axe_path) == []
    page.get_by_role("link", name="People").tap()
    screenshot(page, "setup-people")
    assert axe_violations(page, axe_path) == []
    page.get_by_role("link", name="Add a student").tap()
    expect(page.get_by_role("checkbox", name="Student")).to_be_checked()
    page.get_by_label("Name").fill("Nia Newcomer")
    page.get_by_label("Sign-in email").fill("nia@school.example")
    page.get_by_label("First password").fill("first-password-9")
    screenshot(page, "setup-person-new")
    assert axe_violations(page, axe_path) == []
    page.get_by_role("button", name="Add the person").tap()

    expect(page.get_by_role("heading", level=1)).to_have_text("Nia Newcomer")
    expect(page.get_by_role("status").filter(has_text="can now sign in")).to_be_visible()
    page.get_by_label("Program", exact=True).select_option(label="Private syllabus (walk)")
    page.get_by_label("Usual instructor").select_option(label=world.instructor.name)
    page.get_by_role("button", name="Enrol in this program").tap()
    enrolled = page.get_by_role("region", name="Programs").get_by_role("row").nth(1)
    expect(enrolled).to_contain_text("Private syllabus (walk)")
    expect(enrolled).to_contain_text(world.instructor.name)
    assert fits_the_width(page)
    screenshot(page, "setup-person")
    assert axe_violations(page, axe_path) == []

    page.get_by_role("button", name="Sign out").tap()
    page.wait_for_url("**/signin")
    sign_in(page, "nia@school.example", "first-password-9")
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Progress").tap()
    expect(page.get_by_text("Private syllabus (walk)").first).to_be_visible()


def test_aircraft_and_sites_pages(page, world, axe_path):
    sign_in(page, world.chief.email)
    page.goto("/setup/aircraft")
    expect(page.get_by_role("rowheader", name=world.aircraft.registration)).to_be_visible()
    assert fits_the_width(page)
    screenshot(page, "setup-aircraft")
    assert axe_violations(page, axe_path) == []
    page.goto("/setup/sites")
    page.get_by_role("link", name="Add a site").tap()
    page.get_by_label("Name").fill("Heathfield pad (walk)")
    page.get_by_label("Elevation").fill("1250")
    page.get_by_label("Landing directions").fill("090, 270")
    page.get_by_role("button", name="Add the site").tap()
    row = page.get_by_role("row").filter(has_text="Heathfield pad (walk)")
    expect(row).to_contain_text("1,250 ft")
    row.get_by_role("button", name="Take Heathfield pad (walk) out of use").tap()
    expect(page.get_by_role("row").filter(has_text="Heathfield pad (walk)")).to_contain_text("Out of use")
    screenshot(page, "setup-sites")
    assert axe_violations(page, axe_path) == []
    page.get_by_role("link", name="Edit Heathfield pad (walk)").tap()
    screenshot(page, "setup-site-edit")
    assert axe_violations(page, axe_path) == []


def test_standards_table_and_type_page_fit_the_tablet(page, app, world, db, axe_path):
    from fastapi.testclient import TestClient

    from server.people import service as people
    from server.people.models import Person

    with app.state.sessions() as session:
        token = people.issue_token(session, person=session.get(Person, world.chief.id))
        session.commit()
    client = TestClient(app, headers={"Authorization": f"Bearer {token}"})
    for name, level in (("Private autorotation standard (walk)", "private"), ("Recurrent standard (walk)", "recurrent")):
        assert client.post("/api/v1/standards", json={"name": name, "level": level}).status_code == 201
    sign_in(page, world.chief.email)
    page.goto("/setup/standards")
    expect(page.get_by_role("rowheader", name="Recurrent standard (walk)")).to_be_visible()
    assert fits_the_width(page), "the standards table runs off the right edge"
    screenshot(page, "setup-standards")
    assert axe_violations(page, axe_path) == []
    page.goto(f"/setup/types/{world.helicopter.id}")
    assert fits_the_width(page)
    screenshot(page, "setup-type")
    assert axe_violations(page, axe_path) == []
