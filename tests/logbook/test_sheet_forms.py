"""The sortie sheet's own forms over real HTTP: created once per form key, drafts corrected and
discarded, plausibility warnings confirmed, errors in the trade's words, HTML errors for browsers."""
import html
import re

from sqlalchemy import func, select

from server.logbook.models import Attempt, Sortie
from server.records.models import AuditEvent
from tests.support import make_sortie

START = {"flown_at": "2026-11-20T10:30", "altimeter_unit": "hPa", "oat_c": "15", "altimeter": "1013.25",
         "takeoff_weight_lb": "1350", "remarks": ""}


def count(db, model, *where) -> int:
    db.expire_all()
    return db.scalar(select(func.count()).select_from(model).where(*where))


def start_form(world, **extra) -> dict:
    return {**START, "pilot_id": str(world.student.id), "aircraft_id": str(world.aircraft.id),
            "site_id": str(world.site.id), **extra}


def form_key(page: str) -> str:
    return re.search(r'name="idempotency_key" value="([^"]+)"', page).group(1)


def text_of(page: str) -> str:
    return html.unescape(re.sub(r"<[^>]+>", " ", page))


def test_each_create_form_is_drawn_with_a_key_of_its_own(instructor_client, world, db):
    first, second = (form_key(instructor_client.get("/sorties/new").text) for _ in range(2))
    assert first != second and len(first) >= 32
    sortie = make_sortie(db, world)
    sheet = instructor_client.get(f"/sorties/{sortie.id}").text
    assert form_key(sheet)


def test_a_start_form_sent_twice_starts_one_sortie(instructor_client, world, db):
    key = form_key(instructor_client.get("/sorties/new").text)
    answers = [instructor_client.form_post("/sorties/new", start_form(world, idempotency_key=key)) for _ in range(2)]
    assert [a.status_code for a in answers] == [303, 303]
    assert answers[0].headers["location"] == answers[1].headers["location"]
    assert count(db, Sortie) == 1


def test_an_attempt_sent_twice_with_its_key_is_added_once_and_a_repeat_swaps_nothing(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=1)
    key = form_key(instructor_client.get(f"/sorties/{sortie.id}").text)
    body = {"maneuver": "straight_in", "termination": "touchdown", "flare_height_ft": "85", "idempotency_key": key}
    first = instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", body)
    again = instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", body)
    assert first.status_code == again.status_code == 200
    assert again.headers["HX-Reswap"] == "none" and 'id="attempt-form"' not in again.text
    assert re.search(r'id="attempt-(\d+)"', first.text).group(1) == re.search(r'id="attempt-(\d+)"', again.text).group(1)
    assert count(db, Attempt, Attempt.sortie_id == sortie.id) == 2
    # The fresh form after the add has a new key, and marks what it carried over from #2.
    assert form_key(first.text) != key


def test_a_replay_with_the_header_and_a_new_csrf_token_is_the_same_request(instructor_client, world, db):
    sortie = make_sortie(db, world)
    body = {"maneuver": "turn_180", "termination": "power_recovery", "flare_height_ft": "90"}
    for _ in range(2):
        answer = instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", {**body, "csrf_token": "ignored"},
                                             headers={"Idempotency-Key": "tablet-entry-1"})
        assert answer.status_code == 200
    assert count(db, Attempt, Attempt.sortie_id == sortie.id) == 1
    other = instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", {**body, "flare_height_ft": "70"},
                                        headers={"Idempotency-Key": "tablet-entry-1"})
    assert other.status_code == 422  # the same key for another entry (IETF httpapi idempotency-key draft)


def test_refused_input_does_not_use_up_the_key(instructor_client, world, db):
    sortie = make_sortie(db, world)
    bad = {"maneuver": "straight_in", "termination": "touchdown", "nr_low_pct": "300", "idempotency_key": "k-1"}
    assert instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", bad).status_code == 422
    good = {**bad, "nr_low_pct": "95"}
    assert instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", good).status_code == 200
    assert count(db, Attempt, Attempt.sortie_id == sortie.id) == 1


def test_a_weight_far_from_the_reference_weight_asks_to_confirm(instructor_client, world, db):
    answer = instructor_client.form_post("/sorties/new", start_form(world, takeoff_weight_lb="420"))
    assert answer.status_code == 422 and count(db, Sortie) == 0
    # The test type's reference weight is 1,400 lb: 420 lb is 30 % of it.
    assert "far below this type's reference weight of 1,400 lb (30%)" in text_of(answer.text)
    confirmed = instructor_client.form_post("/sorties/new", start_form(world, takeoff_weight_lb="420",
                                                                       confirm_unusual="1"))
    assert confirmed.status_code == 303 and count(db, Sortie) == 1


def test_figures_that_contradict_each_other_ask_to_confirm(instructor_client, world, db):
    sortie = make_sortie(db, world)
    body = {"maneuver": "straight_in", "termination": "touchdown", "entry_height_ft": "60", "flare_height_ft": "90"}
    answer = instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", body)
    assert answer.status_code == 422 and answer.headers["HX-Retarget"] == "#attempt-form"
    assert "above the entry height of 60 ft" in text_of(answer.text)
    assert 'value="90"' in answer.text  # what was typed comes back
    assert instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", {**body, "confirm_unusual": "1"}).status_code == 200
    assert count(db, Attempt, Attempt.sortie_id == sortie.id) == 1


def test_refusals_read_in_the_trade_s_words_and_mark_the_field(instructor_client, world, db):
    sortie = make_sortie(db, world)
    answer = instructor_client.htmx_post(f"/sorties/{sortie.id}/attempts", {
        "maneuver": "loop", "termination": "touchdown", "nr_low_pct": "abc", "remarks": "r" * 2100})
    text = text_of(answer.text)
    assert "Input should" not in text and "straight_in" not in text
    assert "Pick one of the choices shown." in text and "Give a number, such as 65." in text
    assert "At most 2,000 characters (this has 2,100)." in text
    assert re.search(r'<div class="field has-error">\s*<label for="f-remarks-new"', answer.text)
    new = instructor_client.form_post("/sorties/new", start_form(world, flown_at="yesterday"))
    assert "Give the date and time" in text_of(new.text) and "valid datetime" not in new.text


def test_a_draft_is_corrected_rescored_and_audited(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=2)
    before = (sortie.density_altitude_ft, [a.flare_band_low_ft for a in sortie.attempts])
    form = instructor_client.get(f"/sorties/{sortie.id}/details", headers={"HX-Request": "true"})
    assert form.status_code == 200 and 'value="15"' in form.text
    answer = instructor_client.htmx_post(f"/sorties/{sortie.id}/details", {
        **start_form(world, oat_c="35", takeoff_weight_lb="1500", pilot_id=str(world.other_student.id)),
        "flown_at": "2026-11-20T10:00"})
    assert answer.status_code == 200, text_of(answer.text)
    assert answer.headers["HX-Redirect"].endswith(f"/sorties/{sortie.id}")
    db.expire_all()
    changed = db.get(Sortie, sortie.id)
    assert changed.oat_c == 35 and changed.pilot_id == world.other_student.id
    assert {a.pilot_id for a in changed.attempts} == {world.other_student.id}
    # Hotter and heavier: density altitude up, and (by momentum theory, DESIGN 4.3) the flare band higher.
    assert changed.density_altitude_ft > before[0]
    assert all(a.flare_band_low_ft > low for a, low in zip(changed.attempts, before[1]))
    assert count(db, AuditEvent, AuditEvent.action == "edit", AuditEvent.entity == "sortie") == 1


def test_a_signed_sortie_cannot_be_corrected_or_discarded(instructor_client, world, db):
    sortie = make_sortie(db, world, attempts=1, sign=True)
    corrected = instructor_client.htmx_post(f"/sorties/{sortie.id}/details", start_form(world, oat_c="30"))
    assert corrected.status_code == 409
    assert instructor_client.api("DELETE", f"/api/v1/sorties/{sortie.id}").status_code == 409
    assert instructor_client.form_post(f"/sorties/{sortie.id}/discard").status_code == 409
    assert count(db, Sortie) == 1


def test_a_draft_is_discarded_by_its_instructor_only_and_audited(instructor_client, other_instructor_client,
                                                                chief_client, world, db):
    sortie = make_sortie(db, world, attempts=2)
    sortie_id = sortie.id
    assert other_instructor_client.api("DELETE", f"/api/v1/sorties/{sortie.id}").status_code == 404
    assert chief_client.api("DELETE", f"/api/v1/sorties/{sortie.id}").status_code == 403
    answer = instructor_client.api("DELETE", f"/api/v1/sorties/{sortie.id}")
    assert answer.status_code == 204
    assert count(db, Sortie) == 0 and count(db, Attempt) == 0
    db.expire_all()
    event = db.scalar(select(AuditEvent).where(AuditEvent.action == "discard"))
    assert event.entity_id == str(sortie_id) and len(event.before["attempts"]) == 2
    assert instructor_client.get(f"/api/v1/sorties/{sortie_id}").status_code == 404


def test_a_discarded_sortie_s_page_form_goes_back_to_the_list(instructor_client, world, db):
    sortie = make_sortie(db, world)
    answer = instructor_client.form_post(f"/sorties/{sortie.id}/discard")
    assert answer.status_code == 303 and answer.headers["location"].endswith("/sorties")
    assert count(db, Sortie) == 0


def test_unknown_addresses_answer_a_page_to_browsers_and_json_to_scripts(instructor_client):
    page = instructor_client.get("/no/such/page", headers={"Accept": "text/html,application/xhtml+xml"})
    assert page.status_code == 404 and page.headers["content-type"].startswith("text/html")
    assert "There is no page at this address" in page.text
    api = instructor_client.get("/api/v1/no-such-thing", headers={"Accept": "text/html"})
    assert api.status_code == 404 and api.json()["detail"]
    script = instructor_client.get("/no/such/page")
    assert script.headers["content-type"].startswith("application/json")


def test_the_offline_worker_is_served_with_a_scope_over_the_sheets(anonymous):
    answer = anonymous.get("/sw.js")
    assert answer.status_code == 200 and answer.headers["content-type"].startswith("text/javascript")
    assert answer.headers["Service-Worker-Allowed"] == "/" and answer.headers["Cache-Control"] == "no-cache"
    assert "importScripts(\"/static/outbox.js\")" in answer.text


def test_attempt_cards_say_why_and_name_the_crosswind_side(instructor_client, world, db):
    from server.logbook import service as logbook
    from server.logbook.schemas import AttemptFields
    from server.people.models import Person

    sortie = make_sortie(db, world, wind_dir_deg=360, wind_kt=10, metar="METAR ZZZZ 201020Z 36010KT 9999 15/10 Q1013")
    actor = db.get(Person, world.instructor.id)
    for fields in ({"termination": "power_recovery", "touchdown_speed_kt": 5, "grade": "unsatisfactory"},
                   {"termination": "touchdown", "flare_height_ft": 58, "grade": "satisfactory"}):
        logbook.add_attempt(db, actor=actor, sortie=sortie, data=AttemptFields(
            maneuver="straight_in", landing_dir_deg=270, **fields))
    db.commit()
    text = text_of(instructor_client.get(f"/sorties/{sortie.id}").text)
    # Landing on 270 with the wind from 360: the wind comes from the right (common practice: 90° off).
    assert "10 kt crosswind from the right" in text
    assert "Not satisfactory : graded so by the instructor" in re.sub(r"\s+", " ", text)
    assert "Groundspeed at recovery" in text and "Touchdown speed" not in text.split("#2")[0]
    assert "Satisfactory : instructor's grade, though outside on flare height" in re.sub(r"\s+", " ", text)
    assert "Flare below the band" in text
    assert "METAR METAR" not in re.sub(r"\s+", " ", text)


def test_the_api_corrects_a_draft_s_pilot_and_refuses_it_once_signed(instructor_client, world, db):
    draft = make_sortie(db, world, attempts=1)
    answer = instructor_client.api("PATCH", f"/api/v1/sorties/{draft.id}", json={"pilot_id": world.other_student.id})
    assert answer.status_code == 200, answer.text
    assert answer.json()["pilot_id"] == world.other_student.id
    db.expire_all()
    assert {a.pilot_id for a in db.get(Sortie, draft.id).attempts} == {world.other_student.id}
    signed = make_sortie(db, world, attempts=1, sign=True)
    refused = instructor_client.api("PATCH", f"/api/v1/sorties/{signed.id}", json={"pilot_id": world.other_student.id})
    assert refused.status_code == 409
