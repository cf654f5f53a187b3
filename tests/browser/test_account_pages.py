"""My account and the password reset, walked on the tablet in the real browser, with axe-core on both
pages (WCAG 2.1 AA rules as axe-core implements them)."""
import re

import pytest
from playwright.sync_api import expect

from server.people import service as people
from server.people.models import Person
from tests.browser.conftest import axe_violations, sign_in

pytestmark = pytest.mark.browser
SHOTS = "/tmp/flarebook-account-shots"


@pytest.fixture
def page(new_context):
    return new_context(bypass_csp=True).new_page()


def test_a_reset_then_the_owner_chooses_their_own_password(page, new_context, world, db, axe_path):
    people.issue_token(db, person=db.get(Person, world.student.id), label="hangar tablet")
    db.commit()
    sign_in(page, world.chief.email)
    page.goto(f"/setup/people/{world.student.id}/reset-password")
    assert axe_violations(page, axe_path) == []
    page.screenshot(path=f"{SHOTS}/reset-before.png", full_page=True)
    page.get_by_role("button", name=re.compile("Reset the password")).tap()
    one_time = page.locator("code.one-time").inner_text()
    page.screenshot(path=f"{SHOTS}/reset-done.png", full_page=True)

    student = new_context(bypass_csp=True).new_page()
    student.goto("/signin")
    student.get_by_label("Email").fill(world.student.email)
    student.get_by_label("Password").fill(one_time)
    student.get_by_role("button", name="Sign in").tap()
    student.wait_for_url("**/account")
    expect(student.get_by_role("alert")).to_contain_text("reset by someone else")
    assert axe_violations(student, axe_path) == []
    student.screenshot(path=f"{SHOTS}/account-after-reset.png", full_page=True)
    student.get_by_label("Password you were given").fill(one_time)
    student.get_by_label("New password", exact=True).fill("chosen-by-sam-1")
    student.get_by_label("New password again").fill("chosen-by-sam-1")
    student.get_by_role("button", name="Set my new password").tap()
    expect(student.get_by_role("status").filter(has_text="Your new password is set")).to_be_visible()
    expect(student.get_by_role("cell", name="hangar tablet")).to_be_visible()
    expect(student.get_by_role("cell", name="Revoked")).to_be_visible()  # the reset revoked it
    student.goto("/")
    expect(student).to_have_url(re.compile(r"/$"))


def test_my_account_lists_and_revokes_tokens(page, world, db, axe_path):
    people.issue_token(db, person=db.get(Person, world.instructor.id), label="scoring script")
    db.commit()
    sign_in(page, world.instructor.email)
    page.get_by_role("link", name=world.instructor.name).tap()
    page.wait_for_url("**/account")
    assert axe_violations(page, axe_path) == []
    page.screenshot(path=f"{SHOTS}/account.png", full_page=True)
    page.get_by_role("row", name=re.compile("scoring script")).get_by_role("button", name="Revoke").tap()
    expect(page.get_by_role("row", name=re.compile("scoring script"))).to_contain_text("Revoked")
