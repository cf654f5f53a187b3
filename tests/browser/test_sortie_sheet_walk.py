"""An instructor logs a whole sortie on a 1024x768 touch tablet, in a real browser."""
import re

import pytest
from playwright.sync_api import expect

from server.fleet.models import Site
from tests.browser.conftest import sign_in, watch
from tests.support import PASSWORD

pytestmark = pytest.mark.browser

# Set after a page loads; a full page load would wipe it, an htmx swap keeps it.
MARKER = "window.flarebookNoReload"


def keep_marker(page) -> None:
    page.evaluate(f"{MARKER} = 'still the same page'")


def same_page(page) -> bool:
    return page.evaluate(f"{MARKER} === 'still the same page'")


def watch_errors(page) -> list[str]:
    """Script and console errors, as every page test watches them (htmx's own aborts not counted)."""
    return watch(page)


def density_altitude_ft(page) -> int:
    text = page.locator("#density-altitude").inner_text()
    assert re.fullmatch(r"-?[\d,]+ ft", text), f"density altitude reads {text!r}"
    return int(text.removesuffix(" ft").replace(",", ""))


def tap_chip(scope, group: str, label: str) -> None:
    scope.get_by_role("group", name=re.compile(group)).locator("label.chip", has_text=label).tap()


def add_attempt(page, *, maneuver: str, termination: str, fields: dict[str, str], landing: str | None = None) -> None:
    form = page.locator("#attempt-form")
    tap_chip(form, "Maneuver", maneuver)
    tap_chip(form, "Termination", termination)
    if landing:  # the site's landing directions are one tap away
        form.get_by_role("button", name=landing).tap()
    for label, value in fields.items():
        form.get_by_label(label).fill(value)
    before = page.locator("#attempts article.attempt").count()
    form.get_by_role("button", name="Add attempt").tap()
    expect(page.locator("#attempts article.attempt")).to_have_count(before + 1)


def test_instructor_logs_signs_and_sees_a_sortie_on_a_tablet(page, world):
    errors = watch_errors(page)
    sign_in(page, world.instructor.email)
    assert page.evaluate("matchMedia('(pointer: coarse)').matches"), "the context is not a touch tablet"

    page.get_by_role("navigation").get_by_role("link", name="Start a sortie").tap()
    expect(page.get_by_role("heading", name="Start a sortie")).to_be_visible()
    keep_marker(page)
    page.get_by_label("Pilot").select_option(label=world.student.name)
    page.get_by_label("Aircraft").select_option(label=f"{world.aircraft.registration} · {world.helicopter.designation}")
    page.get_by_label("Site").select_option(label=f"{world.site.name} (500 ft)")
    page.get_by_label(re.compile("Date and time")).fill("2026-11-20T10:30")

    # Density altitude appears while the conditions are typed, without leaving the page.
    expect(page.locator("#density-altitude")).to_have_text("—")
    page.get_by_label("Outside air temperature").press_sequentially("15")
    page.get_by_label("Altimeter setting").press_sequentially("1013.25")
    expect(page.locator("#density-altitude")).to_have_text(re.compile(r"\d ft$"))
    expect(page.locator("#pressure-altitude")).to_have_text("500 ft")  # the site is at 500 ft, standard QNH
    standard_day = density_altitude_ft(page)
    # ISA at 500 ft is 14.0 °C (ICAO Doc 7488: 15 °C less 1.98 °C per 1,000 ft), so 15 °C is 1 °C warm.
    assert 550 <= standard_day <= 700
    oat = page.get_by_label("Outside air temperature")
    oat.fill("")
    oat.press_sequentially("35")
    expect(page.locator("#density-altitude")).not_to_have_text(f"{standard_day:,} ft")
    # Common practice: density altitude rises about 120 ft for each °C above ISA (21 °C here).
    assert abs(density_altitude_ft(page) - (500 + 120 * 21)) <= 200
    assert same_page(page)

    # A pasted METAR fills wind, temperature and altimeter (WMO FM 15 groups).
    page.get_by_label(re.compile("METAR")).fill("METAR ZZZZ 201020Z 27012G20KT 9999 FEW030 22/10 Q1008")
    expect(page.get_by_label("Outside air temperature")).to_have_value("22")
    expect(page.get_by_label("Wind from")).to_have_value("270")
    expect(page.get_by_label("Wind speed")).to_have_value("12")
    expect(page.get_by_label("Gusting to")).to_have_value("20")
    expect(page.get_by_label("Altimeter setting")).to_have_value("1008")
    expect(page.locator("#conditions-readout")).to_contain_text("Filled from the METAR")
    expect(page.locator("#conditions-readout")).to_contain_text("outside air temperature")  # words, not field names
    assert same_page(page)
    page.get_by_label("Take-off weight").fill("1350")

    page.get_by_role("button", name="Start the sortie sheet").tap()
    expect(page.get_by_role("heading", name="Sortie sheet")).to_be_visible()
    expect(page.locator(".facts")).to_contain_text(world.student.name)
    expect(page.locator(".facts")).to_contain_text("270° 12 kt gusting 20")
    keep_marker(page)

    add_attempt(page, maneuver="Straight-in", termination="Full touchdown", landing="270°", fields={
        "Steady-descent airspeed": "65", "Rotor RPM lowest": "95", "Rotor RPM highest": "104",
        "Flare begun at": "90", "Touchdown or termination groundspeed": "3"})
    # Landing on 270 with the wind from 270 at 12 kt: all headwind.
    expect(page.locator("#attempts article.attempt").first).to_contain_text("Wind: 12 kt headwind, no crosswind.")
    # The next attempt starts from the previous one's maneuver, termination and landing direction.
    expect(page.locator("#attempt-form input[name=maneuver][value=straight_in]")).to_be_checked()
    expect(page.locator("#attempt-form").get_by_label("Landing direction")).to_have_value("270")
    add_attempt(page, maneuver="180° turn", termination="Power recovery", fields={
        "Steady-descent airspeed": "63", "Flare begun at": "85"})
    add_attempt(page, maneuver="Straight-in", termination="Full touchdown", fields={
        "Steady-descent airspeed": "66", "Rotor RPM lowest": "84", "Rotor RPM highest": "103",
        "Flare begun at": "95", "Touchdown or termination groundspeed": "2"})
    cards = page.locator("#attempts article.attempt")
    expect(cards).to_have_count(3)

    # Low rotor RPM: the score is capped at 50 and the flag says so in words.
    low_rpm = cards.nth(2)
    expect(low_rpm.locator(".flags")).to_contain_text("Rotor RPM 84% was below the power-off limit of 90%")
    expect(low_rpm.locator(".flags")).to_contain_text("score capped at 50")
    assert float(low_rpm.locator(".score").get_attribute("data-score")) <= 50
    expect(cards.nth(0).locator(".flags")).to_have_count(0)

    # Edit the first attempt in place: a touchdown at 12 kt, beyond the 8 kt limit, lowers its score.
    first = cards.nth(0)
    score_before = float(first.locator(".score").get_attribute("data-score"))
    first.get_by_role("button", name="Edit").tap()
    edit_form = page.locator("form.attempt-form").filter(has=page.get_by_role("heading", name="Edit attempt #1"))
    expect(edit_form.get_by_label("Touchdown or termination groundspeed")).to_have_value("3")
    edit_form.get_by_label("Touchdown or termination groundspeed").fill("12")
    edit_form.get_by_role("button", name="Save changes").tap()
    expect(edit_form).to_have_count(0)
    expect(cards.nth(0).locator("table.parts tr.beyond")).to_contain_text("12 kt")
    assert float(cards.nth(0).locator(".score").get_attribute("data-score")) < score_before

    # Remove the second attempt, after the confirmation.
    page.once("dialog", lambda dialog: dialog.accept())
    second_heading = cards.nth(1).locator("h3").inner_text()
    cards.nth(1).get_by_role("button", name="Remove").tap()
    expect(cards).to_have_count(2)
    expect(page.locator("#attempts")).not_to_contain_text(second_heading)
    assert same_page(page), "adding, editing or removing an attempt reloaded the whole page"

    # Sign with the password: the record is signed and can no longer be edited in place.
    page.get_by_label("Your password").fill(PASSWORD)
    page.get_by_role("button", name="Sign the sortie").tap()
    expect(page.locator(".state-line")).to_contain_text("Signed")
    expect(page.locator(".versions")).to_contain_text(world.instructor.name)
    expect(page.get_by_role("button", name="Edit")).to_have_count(0)
    expect(page.locator("#attempt-form")).to_have_count(0)
    expect(page.locator("#attempts article.attempt")).to_have_count(2)
    assert errors == []


def test_a_wrong_signing_password_leaves_the_sortie_a_draft(page, world, db):
    from tests.support import make_sortie

    sortie = make_sortie(db, world, attempts=1)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    page.get_by_label("Your password").fill("not-my-password")
    page.get_by_role("button", name="Sign the sortie").tap()
    expect(page.get_by_role("alert")).to_be_visible()
    expect(page.locator(".state-line")).to_contain_text("Draft")
    expect(page.locator("#attempt-form")).to_be_visible()


def test_an_impossible_temperature_is_refused_in_the_readout_as_it_is_typed(page, world):
    errors = watch_errors(page)
    sign_in(page, world.instructor.email)
    page.goto("/sorties/new")
    page.get_by_label("Altimeter setting").press_sequentially("1013")
    page.get_by_label("Outside air temperature").press_sequentially("15")
    expect(page.locator("#density-altitude")).to_have_text(re.compile(r"\d ft$"))
    page.get_by_label("Outside air temperature").press_sequentially("0")  # 150 °C
    readout = page.locator("#conditions-readout")
    expect(readout.locator(".notice-error")).to_contain_text("temperature")
    expect(page.locator("#density-altitude")).to_have_text("—")
    assert [e for e in errors if "500" in e] == []


def test_picking_another_site_after_the_conditions_refreshes_the_altitudes(page, world, db):
    db.add(Site(name="Ridge Test Pad", elevation_ft=6000, landing_dirs_deg=[180]))
    db.commit()
    sign_in(page, world.instructor.email)
    page.goto("/sorties/new")
    page.get_by_label("Site").select_option(label=f"{world.site.name} (500 ft)")
    page.get_by_label("Outside air temperature").press_sequentially("15")
    page.get_by_label("Altimeter setting").press_sequentially("1013.25")
    expect(page.locator("#pressure-altitude")).to_have_text("500 ft")
    keep_marker(page)
    page.get_by_label("Site").select_option(label="Ridge Test Pad (6,000 ft)")
    expect(page.locator("#pressure-altitude")).to_have_text("6,000 ft")  # standard altimeter: PA is elevation
    assert same_page(page)
