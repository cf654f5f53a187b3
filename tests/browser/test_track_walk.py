"""An instructor imports the sortie's recorded track on a 1024x768 touch tablet, looks at what was found
and accepts one autorotation into a new attempt, in a real browser under the strict CSP."""
import pytest
from playwright.sync_api import expect

from tests.browser.conftest import axe_violations, sign_in
from tests.browser.test_sortie_sheet_walk import watch_errors
from tests.support import make_sortie
from tests.logbook.test_tracks_api import AIM, track_file

pytestmark = pytest.mark.browser


def test_instructor_imports_a_track_sees_the_profiles_and_accepts_one(page, world, db, tmp_path):
    world.site.aim_lat_deg, world.site.aim_lon_deg = AIM
    db.add(world.site)
    db.commit()
    sortie = make_sortie(db, world)
    errors = watch_errors(page)
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    file = tmp_path / "flight.csv"
    file.write_bytes(track_file())
    page.get_by_label("Track file from the tablet, phone or logger").set_input_files(str(file))
    page.get_by_role("button", name="Import the track").tap()
    detections = page.locator("article.detection")
    expect(detections).to_have_count(2)
    expect(detections.first.locator("svg.profile-chart")).to_be_visible()
    detections.first.scroll_into_view_if_needed()
    page.screenshot(path=str(tmp_path / "track-found.png"))
    first = detections.first
    first.get_by_label("Full touchdown").tap()
    first.get_by_role("button", name="New attempt").tap()
    card = page.locator("#attempts article.attempt")
    expect(card).to_have_count(1)
    expect(card.locator(".measured-line")).to_contain_text("Measured from the recorded track")
    expect(page.locator("article.detection").first).to_contain_text("used for attempt #1")
    card.scroll_into_view_if_needed()
    page.screenshot(path=str(tmp_path / "track-accepted.png"))
    assert errors == []
    print("screenshots in", tmp_path)


def test_the_track_section_has_no_accessibility_violations(new_context, world, db, axe_path, instructor_client):
    """axe-core on the sheet with a track and an accepted detection (axe needs the CSP bypassed)."""
    from tests.logbook.test_tracks_api import upload

    world.site.aim_lat_deg, world.site.aim_lon_deg = AIM
    db.add(world.site)
    db.commit()
    sortie = make_sortie(db, world)
    track = upload(instructor_client, sortie.id).json()
    instructor_client.api("POST", f"/api/v1/tracks/{track['id']}/detections/2/accept",
                          json={"maneuver": "turn_180"})
    page = new_context(bypass_csp=True).new_page()
    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")
    expect(page.locator("article.detection")).to_have_count(2)
    assert axe_violations(page, axe_path) == []
