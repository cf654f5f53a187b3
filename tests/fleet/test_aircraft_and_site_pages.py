"""Aircraft and sites from the browser: add, edit, take out of use; new sorties offer only those in use.

Anchor: issue 13 ("people, aircraft and sites from the browser"); DESIGN section 3 (a site has an
elevation and landing directions in degrees, e.g. 090 and 270 for a strip lying east-west: common practice).
"""
from server.fleet.models import Aircraft, Site
from server.records.models import AuditEvent
from tests.support import cell_texts, make_sortie, parsed


def _choices(page, name: str) -> list[str]:
    return [o.get_text() for o in page.find("select", attrs={"name": name}).find_all("option") if o["value"]]


def test_a_chief_pilot_adds_and_renames_an_aircraft(chief_client, db, world):
    answer = chief_client.form_post("/setup/aircraft/new", {"registration": " ts-wrb ", "type_id": world.helicopter.id})
    assert answer.status_code == 303
    added = db.query(Aircraft).filter_by(registration="TS-WRB").one()
    rows = cell_texts(parsed(chief_client.get("/setup/aircraft")).find("table"))
    assert rows[1][:3] == ["TS-WRB", "Wren W-1 (test)", "In use Take out of use"]
    renamed = chief_client.form_post(f"/setup/aircraft/{added.id}/edit", {"registration": "TS-WRC",
                                                                          "type_id": world.helicopter.id})
    assert renamed.status_code == 303
    db.expire_all()
    assert db.get(Aircraft, added.id).registration == "TS-WRC"
    assert db.query(AuditEvent).filter_by(entity="aircraft", entity_id=str(added.id)).count() == 2


def test_a_refused_aircraft_says_why_and_keeps_the_entry(chief_client, db, world):
    clash = chief_client.form_post("/setup/aircraft/new", {"registration": "ts-wra", "type_id": world.helicopter.id})
    assert clash.status_code == 422
    page = parsed(clash)
    assert "TS-WRA exists already" in page.find(role="alert").get_text()
    assert page.find("input", attrs={"name": "registration"})["value"] == "ts-wra"
    blank = chief_client.form_post("/setup/aircraft/new", {"registration": "", "type_id": world.helicopter.id})
    assert blank.status_code == 422 and parsed(blank).find(class_="has-error") is not None
    assert db.query(Aircraft).count() == 1


def test_an_aircraft_out_of_use_is_not_offered_for_new_sorties_but_keeps_its_records(chief_client, db, world):
    sortie = make_sortie(db, world, attempts=1, sign=True)
    assert chief_client.form_post(f"/setup/aircraft/{world.aircraft.id}/deactivate").status_code == 303
    assert _choices(parsed(chief_client.get("/sorties/new")), "aircraft_id") == []
    assert chief_client.get(f"/sorties/{sortie.id}").status_code == 200
    rows = cell_texts(parsed(chief_client.get("/setup/aircraft")).find("table"))
    assert rows[0][2] == "Out of use Put back in use"
    assert chief_client.form_post(f"/setup/aircraft/{world.aircraft.id}/reactivate").status_code == 303
    assert _choices(parsed(chief_client.get("/sorties/new")), "aircraft_id") == ["TS-WRA · Wren W-1 (test)"]


def test_a_site_with_landing_directions_is_added_edited_and_taken_out_of_use(chief_client, db, world):
    answer = chief_client.form_post("/setup/sites/new", {"name": "Heathfield pad (test)", "elevation_ft": "1250",
                                                         "landing_dirs_deg": "090, 270"})
    assert answer.status_code == 303
    site = db.query(Site).filter_by(name="Heathfield pad (test)").one()
    assert (site.elevation_ft, site.landing_dirs_deg, site.active) == (1250, [90, 270], True)
    listed = {row[0]: row for row in cell_texts(parsed(chief_client.get("/setup/sites")).find("table"))}
    assert listed["Heathfield pad (test)"][1:3] == ["1,250 ft", "090, 270 °"]
    form = parsed(chief_client.get(f"/setup/sites/{site.id}/edit"))
    assert form.find("input", attrs={"name": "landing_dirs_deg"})["value"] == "090, 270"
    chief_client.form_post(f"/setup/sites/{site.id}/edit", {"name": "Heathfield pad (test)", "elevation_ft": "1260",
                                                            "landing_dirs_deg": "180 360"})
    db.expire_all()
    assert (db.get(Site, site.id).elevation_ft, db.get(Site, site.id).landing_dirs_deg) == (1260, [180, 360])
    assert chief_client.form_post(f"/setup/sites/{site.id}/deactivate").status_code == 303
    assert "Heathfield pad (test) (1,260 ft)" not in _choices(parsed(chief_client.get("/sorties/new")), "site_id")
    assert chief_client.form_post(f"/setup/sites/{site.id}/reactivate").status_code == 303
    assert "Heathfield pad (test) (1,260 ft)" in _choices(parsed(chief_client.get("/sorties/new")), "site_id")


def test_bad_site_entries_are_refused_field_by_field(chief_client, db, world):
    answer = chief_client.form_post("/setup/sites/new", {"name": "Odd (test)", "elevation_ft": "high",
                                                         "landing_dirs_deg": "north"})
    assert answer.status_code == 422
    page = parsed(answer)
    errors = {div.find("input")["name"]: div.find(class_="error").get_text() for div in page.find_all(class_="has-error")}
    assert set(errors) == {"elevation_ft", "landing_dirs_deg"}
    assert "degrees" in errors["landing_dirs_deg"]
    assert chief_client.form_post("/setup/sites/new", {"name": "Odd (test)", "elevation_ft": "100",
                                                       "landing_dirs_deg": "400"}).status_code == 422
    assert db.query(Site).filter_by(name="Odd (test)").count() == 0


def test_the_type_page_picks_the_newest_sortie_with_something_to_plot(chief_client, db, world):
    from datetime import UTC, datetime

    from server.logbook import service as logbook
    from server.logbook.schemas import AttemptFields
    from server.people.models import Person

    plotted = make_sortie(db, world, flown_at=datetime(2026, 11, 1, 9, tzinfo=UTC))
    logbook.add_attempt(db, actor=db.get(Person, world.instructor.id), sortie=plotted, data=AttemptFields(
        maneuver="straight_in", termination="touchdown", entry_height_ft=500, entry_kias=65))
    db.commit()
    make_sortie(db, world, attempts=1, flown_at=datetime(2026, 11, 20, 9, tzinfo=UTC))  # newer, no entry points
    page = parsed(chief_client.get(f"/setup/types/{world.helicopter.id}"))
    chosen = page.find("select", attrs={"name": "sortie_id"}).find("option", selected=True)
    assert chosen["value"] == str(plotted.id)
    labels = [o.get_text() for o in page.find("select", attrs={"name": "sortie_id"}).find_all("option")]
    assert any(label.endswith("· 1 attempt") for label in labels)  # not "1 attempts"


def test_a_sites_aim_point_is_set_and_both_halves_are_needed(chief_client, db, world):
    """WGS 84 decimal degrees; latitude within ±90 (common practice)."""
    answer = chief_client.form_post(f"/setup/sites/{world.site.id}/edit", {
        "name": world.site.name, "elevation_ft": "500", "landing_dirs_deg": "090, 270",
        "aim_lat_deg": "51.50123", "aim_lon_deg": "-1.25"})
    assert answer.status_code == 303
    db.expire_all()
    site = db.get(Site, world.site.id)
    assert (site.aim_lat_deg, site.aim_lon_deg) == (51.50123, -1.25)
    listed = {row[0]: row for row in cell_texts(parsed(chief_client.get("/setup/sites")).find("table"))}
    assert listed[world.site.name][3] == "51.50123, -1.25000"
    half = chief_client.form_post(f"/setup/sites/{world.site.id}/edit", {
        "name": world.site.name, "elevation_ft": "500", "aim_lat_deg": "51.5"})
    assert half.status_code == 422 and "both aim_lat_deg and aim_lon_deg" in parsed(half).find(role="alert").get_text()
    far = chief_client.form_post(f"/setup/sites/{world.site.id}/edit", {
        "name": world.site.name, "elevation_ft": "500", "aim_lat_deg": "95", "aim_lon_deg": "0"})
    assert far.status_code == 422 and parsed(far).find("input", attrs={"name": "aim_lat_deg"})["aria-invalid"] == "true"
