"""Standards as data through /api/v1/standards: defaults, checked weights, and edits that supersede
so a signed attempt keeps the standard and the score it was given."""
import pytest
from sqlalchemy import func, select

from server.training.models import Standard
from tests.logbook.test_sortie_api import GOOD_ATTEMPT, new_sortie
from tests.support import PASSWORD

# The design's default weights (DESIGN section 4.4); the built-in tolerances are from memory of the FAA
# practical test standards: airspeed ±5 kt, touchdown point 200 ft, heading ±10°.
DESIGN_WEIGHTS = {"touchdown_speed": 0.30, "flare_height": 0.25, "rotor_rpm": 0.20, "airspeed": 0.10,
                  "touchdown_point": 0.10, "heading": 0.05}


def post(client, **fields):
    return client.api("POST", "/api/v1/standards", json={"name": "Recurrent straight-in", "level": "recurrent",
                                                         "maneuver": "straight_in", **fields})


def test_a_new_standard_starts_from_the_defaults(chief_client):
    answer = post(chief_client)
    assert answer.status_code == 201, answer.text
    body = answer.json()
    assert body["weights"] == DESIGN_WEIGHTS
    assert (body["airspeed_tol_kt"], body["touchdown_point_ft"], body["heading_tol_deg"]) == (5, 200, 10)
    assert body["touchdown_speed_max_kt"] is None  # the helicopter type's own maximum
    assert body["active"] is True and body["supersedes_id"] is None
    assert chief_client.api("GET", f"/api/v1/standards/{body['id']}").json() == body


def test_weights_left_out_keep_their_default(chief_client):
    body = post(chief_client, weights={"heading": 0, "touchdown_speed": 0.5}).json()
    assert body["weights"] == DESIGN_WEIGHTS | {"heading": 0, "touchdown_speed": 0.5}


@pytest.mark.parametrize(("weights", "words"), [
    ({"flare": 0.3}, "Unknown metric(s) in the weights: flare"),
    ({"heading": -0.1}, "cannot be below 0"),
    ({m: 0 for m in DESIGN_WEIGHTS}, "At least one metric needs a weight above zero"),
    ({"heading": "lots"}, "weights.heading"),
])
def test_bad_weights_are_refused_in_words_and_nothing_is_saved(chief_client, db, weights, words):
    answer = post(chief_client, weights=weights)
    assert answer.status_code == 422
    assert words in answer.json()["detail"]
    assert db.scalar(select(func.count()).select_from(Standard)) == 0


def test_one_standard_per_level_and_maneuver(chief_client):
    assert post(chief_client).status_code == 201
    clash = post(chief_client, name="Another")
    assert clash.status_code == 409 and "edit that standard instead" in clash.json()["detail"]
    assert post(chief_client, maneuver="hovering").status_code == 201
    assert post(chief_client, maneuver=None, name="Every maneuver").status_code == 201


def test_an_edit_makes_a_new_version_and_retires_the_old(chief_client):
    first = post(chief_client).json()
    answer = chief_client.api("PATCH", f"/api/v1/standards/{first['id']}", json={"touchdown_point_ft": 100})
    assert answer.status_code == 200, answer.text
    second = answer.json()
    assert second["id"] != first["id"] and second["supersedes_id"] == first["id"]
    assert second["touchdown_point_ft"] == 100 and second["airspeed_tol_kt"] == first["airspeed_tol_kt"]
    old = chief_client.api("GET", f"/api/v1/standards/{first['id']}").json()
    assert old["active"] is False and old["superseded_by_id"] == second["id"] and old["touchdown_point_ft"] == 200
    assert [s["id"] for s in chief_client.api("GET", "/api/v1/standards").json()] == [second["id"]]
    every = chief_client.api("GET", "/api/v1/standards?include_retired=true").json()
    assert {s["id"] for s in every} == {first["id"], second["id"]}
    stale = chief_client.api("PATCH", f"/api/v1/standards/{first['id']}", json={"heading_tol_deg": 5})
    assert stale.status_code == 409


def test_an_edit_that_changes_nothing_makes_no_new_version(chief_client):
    first = post(chief_client).json()
    again = chief_client.api("PATCH", f"/api/v1/standards/{first['id']}", json={"touchdown_point_ft": 200}).json()
    assert again["id"] == first["id"] and again["active"] is True


def test_a_bad_edit_is_refused_and_the_standard_stays(chief_client):
    first = post(chief_client).json()
    answer = chief_client.api("PATCH", f"/api/v1/standards/{first['id']}", json={"weights": {"rotor": 1}})
    assert answer.status_code == 422 and "Unknown metric" in answer.json()["detail"]
    assert chief_client.api("GET", f"/api/v1/standards/{first['id']}").json()["active"] is True


def test_students_and_instructors_read_but_do_not_write_standards(chief_client, student_client, instructor_client):
    first = post(chief_client).json()
    for client in (student_client, instructor_client):
        assert client.api("GET", "/api/v1/standards").status_code == 200
        assert post(client, maneuver="turn_180").status_code == 403
        assert client.api("PATCH", f"/api/v1/standards/{first['id']}", json={"heading_tol_deg": 1}).status_code == 403


def test_a_signed_attempt_keeps_its_score_and_standard_after_the_standard_changes(chief_client, instructor_client,
                                                                                   world):
    # The pilot is not enrolled, so the recurrent standard applies (DESIGN section 3, standards per level).
    standard = post(chief_client, touchdown_speed_max_kt=4).json()
    sortie = new_sortie(instructor_client, world).json()
    logged = instructor_client.api("POST", f"/api/v1/sorties/{sortie['id']}/attempts",
                                   json=GOOD_ATTEMPT | {"touchdown_speed_kt": 3.5}).json()
    assert logged["standard_id"] == standard["id"]
    assert logged["parts"]["touchdown_speed"]["deviation"] == 0  # 3.5 kt is inside 4 kt
    signed = instructor_client.api("POST", f"/api/v1/sorties/{sortie['id']}/sign", json={"password": PASSWORD})
    assert signed.status_code == 200, signed.text

    stricter = chief_client.api("PATCH", f"/api/v1/standards/{standard['id']}",
                                json={"touchdown_speed_max_kt": 2}).json()

    kept = instructor_client.api("GET", f"/api/v1/attempts/{logged['id']}").json()
    assert kept["standard_id"] == standard["id"]
    assert (kept["score"], kept["parts"], kept["flags"]) == (logged["score"], logged["parts"], logged["flags"])
    # A new attempt, flown the same way, is judged by the new version.
    later = new_sortie(instructor_client, world).json()
    fresh = instructor_client.api("POST", f"/api/v1/sorties/{later['id']}/attempts",
                                  json=GOOD_ATTEMPT | {"touchdown_speed_kt": 3.5}).json()
    assert fresh["standard_id"] == stricter["id"]
    assert fresh["parts"]["touchdown_speed"]["deviation"] == pytest.approx(1.5)
    assert fresh["score"] < logged["score"]
    assert any(f["code"] == "fast_touchdown" for f in fresh["flags"])
