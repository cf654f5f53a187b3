"""Helicopter-type setup pages: the form with its avoid-region points, the height-velocity chart with
a chosen sortie's entries, and who may open them."""
import html
import re
import xml.etree.ElementTree as ET
from html.parser import HTMLParser

import pytest
from sqlalchemy import func, select

from server.compute.hv import point_in_polygon
from server.fleet.models import HelicopterType
from server.logbook import service as logbook
from server.logbook.schemas import AttemptFields
from server.people.models import Person
from tests.support import add_second_type, make_sortie

SVG = "{http://www.w3.org/2000/svg}"
TYPE_FORM = {
    "designation": "Heron H-3 (test)", "rotor_radius_ft": "13", "blade_count": "3", "rotor_inertia_slug_ft2": "",
    "normal_rotor_rpm": "500", "nr_power_off_min_pct": "90", "nr_power_off_max_pct": "110",
    "autorotation_kias": "60", "reference_weight_lb": "1600", "flare_band_low_ft": "60", "flare_band_high_ft": "100",
    "touchdown_speed_max_kt": "6",
    "hv_avoid": "0, 15\n0, 450\n25, 350\n38, 120\n12, 15\n\n70, 0\n120, 0\n120, 15\n70, 15",
}


class OptionParser(HTMLParser):
    """The option values and texts of one select, found by its id."""

    def __init__(self, select_id: str):
        super().__init__()
        self.select_id, self.inside, self.options, self.selected = select_id, False, [], None

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "select":
            self.inside = attrs.get("id") == self.select_id
        elif tag == "option" and self.inside:
            self.options.append(attrs["value"])
            if "selected" in attrs:
                self.selected = attrs["value"]

    def handle_endtag(self, tag):
        if tag == "select":
            self.inside = False


def options_of(page: str, select_id: str) -> OptionParser:
    parser = OptionParser(select_id)
    parser.feed(page)
    return parser


def chart_of(page: str) -> ET.Element:
    match = re.search(r"<svg\b.*?</svg>", page, re.S)
    assert match, "the page has no SVG chart"
    return ET.fromstring(match.group(0))


def log_entries(db, world, sortie, entries):
    actor = db.get(Person, world.instructor.id)
    for kias, height in entries:
        logbook.add_attempt(db, actor=actor, sortie=sortie, data=AttemptFields(
            maneuver="straight_in", termination="power_recovery", entry_kias=kias, entry_height_ft=height))
    db.commit()


def test_chief_pilot_adds_a_type_with_two_avoid_regions(chief_client, db):
    answer = chief_client.form_post("/setup/types/new", TYPE_FORM)
    assert answer.status_code == 303, answer.text
    row = db.scalar(select(HelicopterType).where(HelicopterType.designation == "Heron H-3 (test)"))
    assert row.hv_avoid == [[[0, 15], [0, 450], [25, 350], [38, 120], [12, 15]],
                            [[70, 0], [120, 0], [120, 15], [70, 15]]]
    assert (row.flare_band_low_ft, row.flare_band_high_ft, row.rotor_inertia_slug_ft2) == (60, 100, None)
    page = chief_client.get(answer.headers["location"])
    assert [p.get("data-region") for p in chart_of(page.text).iter(f"{SVG}polygon") if p.get("class") == "hv-avoid"] \
        == ["1", "2"]


@pytest.mark.parametrize(("text", "words"), [
    ("0, 15\n0, 450\nforty, 120", "Line 3: 'forty' is not a number of KIAS"),
    ("0, 15\n0, 450 25\n38, 120", "Line 2: write one point as 'KIAS, ft AGL'"),
    ("0, 15\n0, 450", "Avoid region 1 has 2 points; a region needs at least 3 corners"),
    ("0, 15\n0, 450\n25, 350\n\n70, 0\n120, 0", "Avoid region 2 has 2 points"),
    ("0, 15\n0, 450\n250, 350", "Line 3: the airspeed 250 is outside 0 to 200 KIAS"),
    ("0, 15\n0, -40\n25, 350", "Line 2: the height -40 is outside 0 to 10000 ft AGL"),
])
def test_bad_avoid_region_points_are_explained_and_nothing_is_saved(chief_client, db, text, words):
    answer = chief_client.form_post("/setup/types/new", TYPE_FORM | {"hv_avoid": text})
    assert answer.status_code == 422
    assert words in html.unescape(answer.text)
    assert 'aria-invalid="true"' in answer.text
    assert text.splitlines()[0] in answer.text  # what was typed comes back to be corrected
    assert db.scalar(select(func.count()).select_from(HelicopterType).where(
        HelicopterType.designation == "Heron H-3 (test)")) == 0


def test_other_type_figures_are_checked_on_the_form(chief_client):
    limits = chief_client.form_post("/setup/types/new", TYPE_FORM | {"nr_power_off_min_pct": "112"})
    assert limits.status_code == 422
    assert "the power-off rotor RPM low limit must be below the high limit" in limits.text
    radius = chief_client.form_post("/setup/types/new", TYPE_FORM | {"rotor_radius_ft": "-3"})
    assert radius.status_code == 422
    assert 'id="e-f-rotor_radius_ft"' in radius.text and "Greater than 0" in radius.text


def test_editing_a_type_keeps_its_points_in_the_textarea_and_saves_changes(chief_client, world, db):
    form = chief_client.get(f"/setup/types/{world.helicopter.id}/edit")
    assert "0, 10\n0, 400\n30, 300\n40, 100\n15, 10" in form.text
    answer = chief_client.form_post(f"/setup/types/{world.helicopter.id}/edit",
                                    TYPE_FORM | {"designation": world.helicopter.designation,
                                                 "autorotation_kias": "62"})
    assert answer.status_code == 303
    db.expire_all()
    assert db.get(HelicopterType, world.helicopter.id).autorotation_kias == 62


def test_the_chart_plots_a_chosen_sorties_entries_inside_and_outside(chief_client, world, db):
    sortie = make_sortie(db, world)
    log_entries(db, world, sortie, [(10, 200), (65, 600)])
    page = chief_client.get(f"/setup/types/{world.helicopter.id}?sortie_id={sortie.id}")
    assert page.status_code == 200
    svg = chart_of(page.text)
    region = next(p for p in svg.iter(f"{SVG}polygon") if p.get("class") == "hv-avoid")
    corners = [tuple(map(float, pair.split(","))) for pair in region.get("points").split()]
    assert len(corners) == len(world.helicopter.hv_avoid[0])
    markers = {g.get("data-sequence"): g for g in svg.iter(f"{SVG}g") if "hv-entry" in (g.get("class") or "")}
    assert set(markers) == {"1", "2"}
    inside, outside = markers["1"], markers["2"]
    assert "inside" in inside.get("class").split() and inside.find(f"{SVG}polygon") is not None  # a triangle
    assert "outside" in outside.get("class").split() and outside.find(f"{SVG}circle") is not None
    # The marker is drawn where the check says it is: the triangle's centre lies in the drawn region.
    tip = [tuple(map(float, pair.split(","))) for pair in inside.find(f"{SVG}polygon").get("points").split()]
    centre = (tip[0][0], (tip[0][1] + tip[1][1]) / 2)
    assert point_in_polygon(*centre, corners)
    circle = outside.find(f"{SVG}circle")
    assert not point_in_polygon(float(circle.get("cx")), float(circle.get("cy")), corners)
    # Readable axes with units, and the chart in words.
    texts = [t.text for t in svg.iter(f"{SVG}text")]
    assert "Indicated airspeed (KIAS)" in texts and "Height above ground (ft AGL)" in texts
    assert "1 inside the avoid region (attempt #1)" in svg.find(f"{SVG}desc").text
    assert "Caution." in page.text


def test_the_sortie_choice_offers_only_this_types_sorties(chief_client, world, db):
    mine = make_sortie(db, world)
    other_aircraft = add_second_type(db)
    theirs = make_sortie(db, world)
    theirs.aircraft_id = other_aircraft.id  # flown in the other type
    db.commit()
    page = chief_client.get(f"/setup/types/{world.helicopter.id}")
    # Without entry points to plot, none is chosen: the list starts with "Choose a sortie".
    assert options_of(page.text, "f-sortie_id").options == ["", str(mine.id)]
    assert chief_client.get(f"/setup/types/{world.helicopter.id}?sortie_id={theirs.id}").status_code == 404


def test_htmx_gets_only_the_chart_fragment(chief_client, world, db):
    sortie = make_sortie(db, world)
    log_entries(db, world, sortie, [(10, 200)])
    answer = chief_client.get(f"/setup/types/{world.helicopter.id}?sortie_id={sortie.id}",
                              headers={"HX-Request": "true"})
    assert answer.text.lstrip().startswith('<div id="hv-chart"') and "<html" not in answer.text
    assert "HX-Request" in answer.headers["Vary"]


@pytest.mark.parametrize("client_name", ["student_client", "instructor_client"])
def test_students_and_instructors_cannot_open_setup_or_add_types(request, client_name, world, db):
    client = request.getfixturevalue(client_name)
    for url in ("/setup", "/setup/types", "/setup/types/new", f"/setup/types/{world.helicopter.id}",
                f"/setup/types/{world.helicopter.id}/edit", "/setup/standards", "/setup/standards/new"):
        assert client.get(url).status_code in (403, 404), url
    assert client.form_post("/setup/types/new", TYPE_FORM).status_code == 403
    body = {"designation": "Sneaky S-1", "rotor_radius_ft": 12, "blade_count": 2, "normal_rotor_rpm": 500,
            "nr_power_off_min_pct": 90, "nr_power_off_max_pct": 110, "autorotation_kias": 60,
            "reference_weight_lb": 1400, "flare_band_ft": [60, 100], "touchdown_speed_max_kt": 6}
    assert client.api("POST", "/api/v1/types", json=body).status_code == 403
    patch = client.api("PATCH", f"/api/v1/types/{world.helicopter.id}", json={"autorotation_kias": 40})
    assert patch.status_code == 403
    db.expire_all()
    assert db.scalar(select(func.count()).select_from(HelicopterType)) == 1
    assert db.get(HelicopterType, world.helicopter.id).autorotation_kias == 65
    assert ">Setup<" not in client.get("/").text


def test_chief_pilots_see_the_setup_link(chief_client):
    home = chief_client.get("/")
    assert ">Setup</a>" in home.text
    setup = chief_client.get("/setup")
    assert "Helicopter types" in setup.text and "Standards" in setup.text
