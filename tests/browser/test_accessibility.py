"""axe-core finds no accessibility violations on the pages an instructor uses at the practice area."""
import pytest
from playwright.sync_api import expect

from server.logbook import service as logbook
from server.logbook.schemas import AttemptFields
from server.people import service as people
from server.people.models import Person
from tests.browser.conftest import axe_violations, sign_in
from tests.support import make_sortie

pytestmark = pytest.mark.browser


@pytest.fixture
def page(new_context):
    """axe-core is injected as a script, which the app's content security policy would rightly block."""
    return new_context(bypass_csp=True).new_page()


def flagged_sortie(db, world):
    """A draft with an ordinary attempt and one that raises every kind of flag."""
    sortie = make_sortie(db, world, attempts=1)
    logbook.add_attempt(db, actor=db.get(Person, world.instructor.id), sortie=sortie, data=AttemptFields(
        maneuver="straight_in", termination="touchdown", entry_height_ft=100, entry_kias=20, nr_low_pct=84,
        flare_height_ft=40, touchdown_speed_kt=12, takeover=True, remarks="Took the controls."))
    db.commit()
    return sortie


def test_sign_in_page(page, world, axe_path):
    page.goto("/signin")
    assert axe_violations(page, axe_path) == []


def test_sign_in_page_of_the_demo_with_its_sign_ins(page, world, db, axe_path):
    people.school(db).demo = True
    db.commit()
    page.goto("/signin")
    expect(page.get_by_role("heading", name="Demo school sign-ins")).to_be_visible()
    assert axe_violations(page, axe_path) == []


def test_sign_in_page_after_a_refusal(page, world, axe_path):
    page.goto("/signin")
    page.get_by_label("Email").fill(world.instructor.email)
    page.get_by_label("Password").fill("not-the-password")
    page.get_by_role("button", name="Sign in").tap()
    expect(page.get_by_role("alert")).to_be_visible()
    assert axe_violations(page, axe_path) == []


def test_home_and_sortie_list(page, world, db, axe_path):
    make_sortie(db, world, attempts=2, sign=True)
    sign_in(page, world.instructor.email)
    assert axe_violations(page, axe_path) == []
    page.goto("/sorties")
    assert axe_violations(page, axe_path) == []


def test_new_sortie_page_with_the_conditions_readout(page, world, axe_path):
    sign_in(page, world.instructor.email)
    page.goto("/sorties/new")
    page.get_by_label("Site").select_option(label=f"{world.site.name} (500 ft)")
    page.get_by_label("Outside air temperature").press_sequentially("25")
    page.get_by_label("Altimeter setting").press_sequentially("1009")
    expect(page.locator("#density-altitude")).not_to_have_text("—")
    assert axe_violations(page, axe_path) == []


def test_new_sortie_page_with_errors(page, world, axe_path):
    sign_in(page, world.instructor.email)
    page.goto("/sorties/new")
    page.get_by_label("Pilot").evaluate("select => select.removeAttribute('required')")
    page.get_by_label("Outside air temperature").fill("900")
    page.get_by_role("button", name="Start the sortie sheet").tap()
    expect(page.locator(".has-error").first).to_be_visible()
    assert axe_violations(page, axe_path) == []


def test_sortie_sheet_draft_with_flags_and_an_open_edit_form(page, world, db, axe_path):
    sortie = flagged_sortie(db, world)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    expect(page.locator(".flag-line")).to_be_visible()
    assert axe_violations(page, axe_path) == []
    page.locator("#attempts article.attempt").nth(1).locator("summary").tap()
    expect(page.locator(".flags")).to_be_visible()
    assert axe_violations(page, axe_path) == []
    page.locator("#attempts article.attempt").first.get_by_role("button", name="Edit").tap()
    expect(page.get_by_role("heading", name="Edit attempt #1")).to_be_visible()
    assert axe_violations(page, axe_path) == []


def test_sortie_sheet_attempt_form_with_errors(page, world, db, axe_path):
    sortie = make_sortie(db, world)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    form = page.locator("#attempt-form")
    form.locator("label.chip", has_text="Straight-in").tap()
    form.locator("label.chip", has_text="Full touchdown").tap()
    form.get_by_label("Rotor RPM lowest").fill("300")
    form.get_by_role("button", name="Add attempt").tap()
    expect(form.locator(".has-error")).to_be_visible()
    assert axe_violations(page, axe_path) == []


def test_signed_sortie_sheet_seen_by_its_student(page, world, db, axe_path):
    sortie = make_sortie(db, world, attempts=3, sign=True)
    sign_in(page, world.student.email)
    page.goto(f"/sorties/{sortie.id}")
    expect(page.get_by_role("button", name="I have read this record")).to_be_visible()
    assert axe_violations(page, axe_path) == []


def test_sortie_sheet_online_offline_and_with_waiting_and_refused_entries(page, world, db, axe_path):
    from sqlalchemy import delete

    from server.people.models import UserSession

    sortie = make_sortie(db, world, attempts=2)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    page.wait_for_function("() => document.documentElement.dataset.offlineReady === '1'")
    assert axe_violations(page, axe_path) == []  # online
    page.context.set_offline(True)
    expect(page.locator("#connection")).to_be_visible()
    assert axe_violations(page, axe_path) == []  # offline, nothing waiting
    form = page.locator("#attempt-form")
    form.get_by_label("Flare begun at").fill("85")
    form.get_by_role("button", name="Add attempt").tap()
    expect(page.locator("#outbox-list li")).to_have_count(1)
    assert axe_violations(page, axe_path) == []  # an entry waiting to send
    db.execute(delete(UserSession))
    db.commit()
    page.context.set_offline(False)
    expect(page.locator("#outbox-list li.refused")).to_have_count(1)
    assert axe_violations(page, axe_path) == []  # a refused entry with what to do


def test_sortie_sheet_with_a_plausibility_warning_and_the_correction_form(page, world, db, axe_path):
    sortie = make_sortie(db, world, attempts=1)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    form = page.locator("#attempt-form")
    form.get_by_label("Entry height").fill("300")
    form.get_by_label("Flare begun at").fill("400")
    form.get_by_role("button", name="Add attempt").tap()
    expect(page.get_by_role("alert")).to_contain_text("above the entry height")
    assert axe_violations(page, axe_path) == []
    page.get_by_role("button", name="Correct these details").tap()
    expect(page.get_by_role("heading", name="Correct the sortie's details")).to_be_visible()
    assert axe_violations(page, axe_path) == []
