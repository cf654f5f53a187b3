"""Logging on the sortie sheet as an instructor between sorties would, on the 1024x768 touch tablet under
the real content security policy: nothing typed is lost, a double tap makes one record, errors show
where the eye is, a draft can be corrected or discarded, and a next attempt takes few taps."""
import re

import pytest
from playwright.sync_api import TimeoutError as PlaywrightTimeoutError
from playwright.sync_api import expect
from sqlalchemy import func, select

from server.logbook.models import Attempt, Sortie
from server.records.models import AuditEvent
from tests.browser.conftest import sign_in
from tests.browser.test_sortie_sheet_walk import watch_errors
from tests.support import make_sortie

pytestmark = pytest.mark.browser

METAR = "METAR ZZZZ 201020Z 27012G20KT 9999 FEW030 22/10 Q1008"


def script_errors(errors: list[str]) -> list[str]:
    """Errors of scripts and the content security policy; Chromium also logs every 4xx answer, as wanted here."""
    return [e for e in errors if not re.search(r"Failed to load resource: .* status of 4\d\d", e)]


def count(db, model, *where) -> int:
    db.expire_all()
    return db.scalar(select(func.count()).select_from(model).where(*where))


def fill_start_form(page, world) -> None:
    page.goto("/sorties/new")
    page.get_by_label("Pilot").select_option(label=world.student.name)
    page.get_by_label("Aircraft").select_option(label=f"{world.aircraft.registration} · {world.helicopter.designation}")
    page.get_by_label("Site").select_option(label=f"{world.site.name} (500 ft)")


def double_tap(page, locator) -> None:
    """Two taps 60 ms apart at the same spot, as a finger does; no waiting for the page in between.

    Each tap has a time limit: Chromium can leave a touch sent while the page is going away unanswered
    for ever (`page.touchscreen.tap` then hung the whole run), so the second tap may find the page gone,
    as a finger lifted a moment late would."""
    locator.scroll_into_view_if_needed()
    locator.tap(no_wait_after=True)
    page.wait_for_timeout(60)
    try:
        locator.tap(force=True, no_wait_after=True, timeout=2000)
    except PlaywrightTimeoutError:
        pass  # the page had moved on: the second tap met nothing


@pytest.mark.parametrize("key_delay_ms", [0, 150])
def test_a_weight_typed_right_after_pasting_a_metar_is_kept_as_typed(page, world, db, key_delay_ms):
    errors = watch_errors(page)
    sign_in(page, world.instructor.email)
    fill_start_form(page, world)
    page.get_by_label(re.compile("METAR")).fill(METAR)
    weight = page.get_by_label("Take-off weight")
    weight.tap()
    weight.press_sequentially("1420", delay=key_delay_ms)
    expect(page.get_by_label("Outside air temperature")).to_have_value("22")  # the METAR's answer came
    expect(page.locator("#conditions-readout")).to_contain_text("Filled from the METAR")
    page.wait_for_timeout(900)  # every answer to the typing is in
    expect(weight).to_have_value("1420")
    page.get_by_role("button", name="Start the sortie sheet").tap()
    expect(page.get_by_role("heading", name="Sortie sheet")).to_be_visible()
    db.expire_all()
    assert db.scalar(select(Sortie.takeoff_weight_lb)) == 1420
    assert errors == []


def test_a_field_typed_after_the_metar_is_not_overwritten_by_it(page, world):
    sign_in(page, world.instructor.email)
    fill_start_form(page, world)
    page.get_by_label(re.compile("METAR")).fill(METAR)
    oat = page.get_by_label("Outside air temperature")
    oat.fill("19")  # the instructor's own thermometer, typed over whatever the field holds
    expect(page.get_by_label("Wind speed")).to_have_value("12")
    page.wait_for_timeout(900)
    expect(oat).to_have_value("19")


def test_a_field_the_instructor_is_in_when_the_metar_answers_keeps_what_they_type(page, world):
    """The answer to a pasted METAR lands while the instructor is already in the temperature field: what
    they type then is the whole value, not added to the METAR's (22 °C then "19" must not read 2219)."""
    sign_in(page, world.instructor.email)
    fill_start_form(page, world)
    page.get_by_label(re.compile("METAR")).fill(METAR)
    oat = page.get_by_label("Outside air temperature")
    oat.focus()  # tapped before the answer comes
    expect(page.get_by_label("Wind speed")).to_have_value("12")  # the answer has come
    oat.press_sequentially("19")
    expect(oat).to_have_value("19")
    page.get_by_label("Wind speed").focus()
    expect(oat).to_have_value("19")  # left after typing: still the instructor's
    expect(page.locator("#conditions-readout")).to_contain_text("Fields typed in after the METAR keep what you typed.")


def test_a_field_left_untyped_after_the_metar_answered_gets_the_metar_value(page, world):
    sign_in(page, world.instructor.email)
    fill_start_form(page, world)
    page.get_by_label(re.compile("METAR")).fill(METAR)
    oat = page.get_by_label("Outside air temperature")
    oat.focus()
    expect(page.get_by_label("Wind speed")).to_have_value("12")
    expect(oat).to_have_value("")  # not written under the instructor's finger
    page.get_by_label("Wind speed").focus()
    expect(oat).to_have_value("22")  # METAR 22/10: 22 °C, filled once the field is left untyped


def test_a_weight_far_from_the_reference_is_warned_about_and_taken_once_confirmed(page, world, db):
    sign_in(page, world.instructor.email)
    fill_start_form(page, world)
    page.get_by_label("Outside air temperature").fill("15")
    page.get_by_label("Take-off weight").fill("420")
    page.get_by_role("button", name="Start the sortie sheet").tap()
    warning = page.get_by_role("alert").filter(has_text="far below")
    expect(warning).to_contain_text("420 lb")
    expect(warning).to_be_in_viewport()
    assert count(db, Sortie) == 0
    page.get_by_label("These figures are right as entered").check()
    page.get_by_role("button", name="Start the sortie sheet").tap()
    expect(page.get_by_role("heading", name="Sortie sheet")).to_be_visible()
    assert count(db, Sortie) == 1


def test_a_double_tap_on_start_makes_one_sortie(page, world, db):
    sign_in(page, world.instructor.email)
    fill_start_form(page, world)
    double_tap(page, page.get_by_role("button", name="Start the sortie sheet"))
    expect(page.get_by_role("heading", name="Sortie sheet")).to_be_visible()
    page.wait_for_timeout(800)
    assert count(db, Sortie) == 1


def test_a_double_tap_on_add_attempt_makes_one_attempt(page, world, db):
    errors = watch_errors(page)
    sortie = make_sortie(db, world, attempts=1)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    form = page.locator("#attempt-form")
    form.get_by_label("Flare begun at").fill("88")
    double_tap(page, form.get_by_role("button", name="Add attempt"))
    expect(page.locator("#attempts article.attempt")).to_have_count(2)
    page.wait_for_timeout(1200)
    expect(page.locator("#attempts article.attempt")).to_have_count(2)
    assert count(db, Attempt, Attempt.sortie_id == sortie.id) == 2
    expect(page.locator("#attempt-form .save-state")).to_contain_text("Saved: #2")
    assert errors == []


def test_a_wrong_signing_password_shows_at_the_form_and_the_address_stays(page, world, db):
    errors = watch_errors(page)
    sortie = make_sortie(db, world, attempts=6)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    address = page.url
    page.get_by_label("Your password").fill("not-my-password")
    page.get_by_role("button", name="Sign the sortie").tap()
    message = page.locator("#sign").get_by_role("alert")
    expect(message).to_contain_text("That password is not right")
    expect(message).to_be_in_viewport()
    assert page.url == address
    page.reload()  # the address is still the sheet: a reload shows it again, not raw JSON or a resend
    expect(page.get_by_role("heading", name="Sortie sheet")).to_be_visible()
    expect(page.locator(".state-line")).to_contain_text("Draft")
    assert script_errors(errors) == []


def test_a_draft_is_corrected_with_its_figures_recomputed_and_then_discarded(page, world, db):
    errors = watch_errors(page)
    sortie = make_sortie(db, world, attempts=1)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    before = page.locator("#density-altitude").inner_text()
    page.get_by_role("button", name="Correct these details").tap()
    details = page.locator("form#sortie-details")
    expect(details.get_by_label("Outside air temperature")).to_have_value("15")
    details.get_by_label("Outside air temperature").fill("30")
    details.get_by_label("Take-off weight").fill("1350")
    details.get_by_role("button", name="Save the corrections").tap()
    expect(page.locator(".facts")).to_contain_text("1,350 lb")
    assert page.locator("#density-altitude").inner_text() != before
    # Common practice: about 120 ft of density altitude per °C above ISA (ISA at 500 ft is 14 °C: +16 °C).
    after_ft = int(page.locator("#density-altitude").inner_text().removesuffix(" ft").replace(",", ""))
    assert abs(after_ft - (500 + 120 * 16)) <= 200
    assert count(db, AuditEvent, AuditEvent.action == "edit", AuditEvent.entity == "sortie") == 1

    page.once("dialog", lambda dialog: dialog.accept())
    page.get_by_role("button", name="Discard this draft").tap()
    expect(page.get_by_role("heading", name="Sorties")).to_be_visible()
    assert count(db, Sortie) == 0
    assert count(db, AuditEvent, AuditEvent.action == "discard") == 1
    assert errors == []


def test_a_signed_sortie_offers_neither_correction_nor_discard(page, world, db):
    sortie = make_sortie(db, world, attempts=2, sign=True)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    expect(page.locator(".state-line")).to_contain_text("Signed")
    expect(page.get_by_role("button", name="Correct these details")).to_have_count(0)
    expect(page.get_by_role("button", name="Discard this draft")).to_have_count(0)
    expect(page.locator("#attempt-form")).to_have_count(0)


def test_a_typical_next_attempt_takes_at_most_eight_taps_plus_the_digits(page, world, db):
    sortie = make_sortie(db, world, attempts=0)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    form = page.locator("#attempt-form")
    form.locator("label.chip", has_text="Straight-in").tap()
    form.locator("label.chip", has_text="Full touchdown").tap()
    form.get_by_role("button", name="270°").tap()
    form.get_by_label("Entry height").fill("500")
    form.get_by_label("Flare begun at").fill("90")
    form.get_by_role("button", name="Add attempt").tap()
    expect(page.locator("#attempts article.attempt")).to_have_count(1)
    # The next one: same kind, direction and entry carried over (and marked); four new figures.
    expect(form.locator("[data-carried-field=landing_dir_deg]")).to_contain_text("as on #1")
    page.wait_for_timeout(1100)  # a real instructor needs far longer than the double-tap guard
    taps = []

    def tap(locator):
        taps.append(locator)
        locator.tap()

    for label, digits in (("Steady-descent airspeed", "64"), ("Rotor RPM lowest", "96"), ("Flare begun at", "85"),
                          ("Touchdown or termination groundspeed", "2")):
        tap(form.get_by_label(label))
        page.keyboard.type(digits)
    tap(form.get_by_role("button", name="Add attempt"))
    expect(page.locator("#attempts article.attempt")).to_have_count(2)
    assert len(taps) <= 8
    db.expire_all()
    second = db.scalar(select(Attempt).where(Attempt.sortie_id == sortie.id, Attempt.sequence == 2))
    assert (second.maneuver, second.termination, second.landing_dir_deg, second.entry_height_ft) == (
        "straight_in", "touchdown", 270, 500)
    assert (second.descent_kias, second.nr_low_pct, second.flare_height_ft, second.touchdown_speed_kt) == (64, 96, 85, 2)


def test_carried_values_are_cleared_in_one_tap(page, world, db):
    sortie = make_sortie(db, world, attempts=0)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    form = page.locator("#attempt-form")
    form.locator("label.chip", has_text="Hovering").tap()
    form.locator("label.chip", has_text="To a hover").tap()
    form.get_by_label("Entry height").fill("5")
    form.get_by_role("button", name="Add attempt").tap()
    expect(form.get_by_label("Entry height")).to_have_value("5")
    form.get_by_role("button", name="Clear carried values").tap()
    expect(form.get_by_label("Entry height")).to_have_value("")
    expect(form.locator("[data-carried-field]")).to_have_count(0)


def test_long_sheets_stay_short_and_long_text_wraps(page, world, db):
    sortie = make_sortie(db, world, attempts=6, metar=METAR, remarks="Gusty at the far end.")
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    cards = page.locator("#attempts article.attempt")
    expect(cards).to_have_count(6)
    assert max(cards.nth(i).bounding_box()["height"] for i in range(6)) <= 110
    form_top = page.locator("#attempt-form").bounding_box()["y"]
    assert form_top < 1600, f"the entry form starts {form_top:.0f} px down"
    page.get_by_role("link", name="Log an attempt").tap()  # and one tap away from the top
    expect(page.locator("#attempt-form")).to_be_in_viewport()
    page.screenshot(path="/tmp/sheet-six-attempts.png", full_page=True)
    # The parts of a score are one tap away.
    cards.first.locator("summary").tap()
    expect(cards.first.locator("table.parts")).to_be_visible()


def test_one_long_unbroken_string_wraps_instead_of_widening_the_page(page, world, db):
    sortie = make_sortie(db, world, attempts=1, remarks="x" * 1900)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    page.locator("#attempt-form").get_by_label("Remarks").fill("y" * 1500)
    assert page.evaluate("() => document.documentElement.scrollWidth") <= 1024


def test_a_remark_over_the_limit_is_stopped_as_it_is_typed(page, world, db):
    sortie = make_sortie(db, world)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    remarks = page.locator("#attempt-form").get_by_label("Remarks")
    remarks.fill("y" * 2100)
    assert len(remarks.input_value()) == 2000
    expect(page.locator("#attempt-form .counter")).to_have_text("2,000 of 2,000 characters")


def test_browsers_get_an_error_page_and_scripts_json(page, world):
    sign_in(page, world.instructor.email)
    answer = page.goto("/no/such/page")
    assert answer.status == 404
    expect(page.get_by_role("alert")).to_contain_text("There is no page at this address")
    assert "application/json" in page.request.get("/api/v1/no-such-thing").headers["content-type"]
