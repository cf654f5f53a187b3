"""The chief pilot's standards pages: the list with the built-in defaults, a new standard, an edit
that saves a new version, and errors in words."""
import html

from sqlalchemy import func, select

from server.training.models import Standard
from tests.support import input_values

FORM = {
    "name": "Private straight-in", "level": "private", "maneuver": "straight_in", "airspeed_tol_kt": "5",
    "touchdown_speed_max_kt": "", "touchdown_point_ft": "150", "heading_tol_deg": "10",
    "consecutive_needed": "3", "threshold": "75", "decay_days": "60",
    "weight_touchdown_speed": "0.3", "weight_flare_height": "0.25", "weight_rotor_rpm": "0.2",
    "weight_airspeed": "0.1", "weight_touchdown_point": "0.1", "weight_heading": "0.05",
}


def test_the_list_shows_the_built_in_defaults_when_no_standard_is_set(chief_client):
    page = chief_client.get("/setup/standards")
    assert page.status_code == 200
    text = html.unescape(page.text)
    assert "every attempt is scored with the built-in defaults" in text
    assert "airspeed ±5 kt" in text and "touchdown point within 200 ft" in text and "heading ±10 °" in text
    assert "Caution." in text


def test_the_new_standard_form_starts_from_the_defaults(chief_client):
    # The design's starting values (section 4.4), which the school then changes.
    values = input_values(chief_client.get("/setup/standards/new").text)
    assert values["weight_touchdown_speed"] == "0.3" and values["weight_heading"] == "0.05"
    assert (values["airspeed_tol_kt"], values["touchdown_point_ft"], values["heading_tol_deg"]) == ("5", "200", "10")
    assert values["touchdown_speed_max_kt"] == ""


def test_chief_pilot_adds_and_edits_a_standard(chief_client, db):
    created = chief_client.form_post("/setup/standards/new", FORM)
    assert created.status_code == 303, created.text
    row = db.scalar(select(Standard))
    assert (row.level, row.maneuver, row.touchdown_point_ft, row.touchdown_speed_max_kt) == ("private", "straight_in",
                                                                                         150, None)
    listing = chief_client.get("/setup/standards")
    assert "Private straight-in" in listing.text and "within 150 ft" in listing.text

    edited = chief_client.form_post(f"/setup/standards/{row.id}/edit", FORM | {"touchdown_point_ft": "100"})
    assert edited.status_code == 303
    db.expire_all()
    versions = list(db.scalars(select(Standard).order_by(Standard.id)))
    assert [(s.active, s.touchdown_point_ft) for s in versions] == [(False, 150), (True, 100)]
    assert versions[1].supersedes_id == versions[0].id
    listing = chief_client.get("/setup/standards")
    assert "within 100 ft" in listing.text and "Earlier versions (1)" in listing.text


def test_all_zero_weights_are_explained_and_nothing_is_saved(chief_client, db):
    zeros = {key: "0" for key in FORM if key.startswith("weight_")}
    answer = chief_client.form_post("/setup/standards/new", FORM | zeros)
    assert answer.status_code == 422
    assert "At least one metric needs a weight above zero." in answer.text
    assert db.scalar(select(func.count()).select_from(Standard)) == 0


def test_a_field_error_is_marked_beside_its_field(chief_client, db):
    answer = chief_client.form_post("/setup/standards/new", FORM | {"threshold": "140", "weight_heading": "-1"})
    assert answer.status_code == 422
    assert 'id="e-f-threshold"' in answer.text
    assert db.scalar(select(func.count()).select_from(Standard)) == 0
