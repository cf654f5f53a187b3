"""POST /api/v1/conditions over real HTTP: the design's fields, density altitude against the ISA
reference, METAR filling, and wind components."""
import itertools
import threading
import time

import httpx
import pytest
import uvicorn
from ambiance import CONST as ISA
from ambiance import Atmosphere as IsaReference
from sqlalchemy import func, select

from server.logbook.models import Sortie
from server.people import service as people

M_PER_FT = 0.3048
HPA_PER_INHG = 33.86389  # 1 inHg (0 °C) = 3386.389 Pa, NIST SP 811
DESIGN_FIELDS = {"pressure_altitude_ft", "density_altitude_ft", "density_ratio", "isa_temp_c", "headwind_kt",
                 "crosswind_kt"}

ELEVATIONS_FT = [0, 2_000, 5_000, 8_000, 12_000]
TEMPERATURES_C = [-20, 0, 15, 30, 45]
ALTIMETERS = [("altimeter_hpa", 985.0), ("altimeter_hpa", 1013.25), ("altimeter_hpa", 1035.0),
              ("altimeter_inhg", 29.10), ("altimeter_inhg", 29.92), ("altimeter_inhg", 30.50)]
GRID = list(itertools.product(ELEVATIONS_FT, ALTIMETERS, TEMPERATURES_C))


@pytest.fixture(scope="module")
def live_url(app):
    """The app served by uvicorn on a free local port, so requests cross a real socket."""
    server = uvicorn.Server(uvicorn.Config(app, host="127.0.0.1", port=0, log_level="warning"))
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    deadline = time.monotonic() + 10
    while not server.started:
        assert time.monotonic() < deadline, "the test server did not start"
        time.sleep(0.02)
    port = server.servers[0].sockets[0].getsockname()[1]
    yield f"http://127.0.0.1:{port}"
    server.should_exit = True
    thread.join(timeout=10)


@pytest.fixture
def http(live_url, world, db):
    """An HTTP client with an instructor's personal API token."""
    token = people.issue_token(db, person=db.merge(world.instructor), label="tests")
    db.commit()
    with httpx.Client(base_url=live_url, headers={"Authorization": f"Bearer {token}"}, timeout=10) as client:
        yield client


def geometric_m(geopotential_m: float) -> float:
    return ISA.r * geopotential_m / (ISA.r - geopotential_m)


def reference_density_altitude_ft(elevation_ft: float, altimeter_hpa: float, oat_c: float) -> float:
    """Density altitude from the ISA of `ambiance` (ICAO Doc 7493 / ISO 2533), used only in tests.

    An altimeter set to QNH reads field elevation: its subscale shifts the height scale by the ISA
    pressure height of the setting (NWS altimeter-setting definition, from memory), so the pressure
    altitude is the elevation plus that height. The air's density at the ISA pressure of that height
    and the actual temperature (ideal gas), then the ISA height of that density.
    """
    setting_height_m = float(IsaReference.from_pressure(altimeter_hpa * 100).H[0])
    pressure_altitude_m = elevation_ft * M_PER_FT + setting_height_m
    station_pa = float(IsaReference(geometric_m(pressure_altitude_m)).pressure[0])
    density = station_pa / (ISA.R * (oat_c + 273.15))
    return float(IsaReference.from_density(density).H[0]) / M_PER_FT


def test_the_answer_carries_the_design_fields(http):
    answer = http.post("/api/v1/conditions", json={"elevation_ft": 500, "altimeter_hpa": 1013.25, "oat_c": 15,
                                                   "wind_dir_deg": 270, "wind_kt": 10, "landing_dir_deg": 270})
    assert answer.status_code == 200, answer.text
    assert DESIGN_FIELDS <= set(answer.json())
    assert all(answer.json()[name] is not None for name in DESIGN_FIELDS)


def test_density_altitude_agrees_with_the_isa_reference_across_the_grid(http):
    # Source: ambiance (ICAO standard atmosphere, a reference library used only in tests); tolerance
    # from the issue: 0.5 % or 30 ft, whichever is larger. One request per grid point, over HTTP.
    misses = []
    for elevation_ft, (unit, setting), oat_c in GRID:
        answer = http.post("/api/v1/conditions", json={"elevation_ft": elevation_ft, unit: setting, "oat_c": oat_c})
        assert answer.status_code == 200, answer.text
        hpa = setting if unit == "altimeter_hpa" else setting * HPA_PER_INHG
        expected = reference_density_altitude_ft(elevation_ft, hpa, oat_c)
        got = answer.json()["density_altitude_ft"]
        if abs(got - expected) > max(0.005 * abs(expected), 30.0):
            misses.append(f"{elevation_ft} ft, {setting} {unit}, {oat_c} °C: {got} ft, reference {expected:.0f} ft")
    assert not misses, "\n".join(misses)
    assert len(GRID) == 150


def test_standard_day_at_sea_level(http):
    # Source: ICAO standard atmosphere (Doc 7488): 1013.25 hPa and 15 °C at sea level, density ratio 1.
    body = http.post("/api/v1/conditions", json={"elevation_ft": 0, "altimeter_inhg": 29.92, "oat_c": 15}).json()
    assert abs(body["pressure_altitude_ft"]) <= 15  # 29.92 inHg is 1013.2 hPa, a hair under standard
    assert abs(body["density_altitude_ft"]) <= 30
    assert body["density_ratio"] == pytest.approx(1.0, abs=0.002)
    assert body["isa_temp_c"] == pytest.approx(15.0, abs=0.1)


def test_a_pasted_metar_fills_wind_gust_temperature_and_altimeter(http):
    # Source: FAA Aviation Weather Services (AC 00-45) METAR example for KOKC, from memory: wind 220 at
    # 15 gusting 25 kt, temperature 18 °C, altimeter 29.92 inHg.
    metar = ("METAR KOKC 011955Z AUTO 22015G25KT 180V250 3/4SM R17L/2600FT +TSRA BR OVC010CB 18/16 "
             "A2992 RMK AO2")
    body = http.post("/api/v1/conditions", json={"elevation_ft": 1300, "landing_dir_deg": 220,
                                                 "metar": metar}).json()
    assert body["wind_dir_deg"] == 220 and body["wind_kt"] == 15 and body["gust_kt"] == 25
    assert body["oat_c"] == 18
    assert body["altimeter_hpa"] == pytest.approx(29.92 * HPA_PER_INHG, abs=0.1)
    assert set(body["filled_from_metar"]) == {"wind_dir_deg", "wind_kt", "gust_kt", "oat_c", "altimeter_hpa"}
    assert body["headwind_kt"] == 15 and body["crosswind_kt"] == 0  # wind straight down the landing direction
    assert body["density_altitude_ft"] is not None


def test_a_metar_fills_a_new_sortie_through_the_api(http, world):
    # Source: ICAO Annex 3 / WMO FM 15 example for the fictitious station YUDO (from memory): 240 at 8 kt,
    # 17 °C, QNH 1018 hPa.
    answer = http.post("/api/v1/sorties", json={
        "flown_at": "2026-11-20T10:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.student.id,
        "site_id": world.site.id, "metar": "METAR YUDO 221630Z 24008KT 9999 SCT010 17/16 Q1018"})
    assert answer.status_code == 201, answer.text
    sortie = answer.json()
    assert (sortie["wind_dir_deg"], sortie["wind_kt"], sortie["oat_c"], sortie["altimeter_hpa"]) == (240, 8, 17, 1018)
    assert sortie["density_altitude_ft"] is not None


@pytest.mark.parametrize("metar", ["the quick brown fox", "METAR 12345 GARBAGE", "KJFK 121251Z NIL"])
def test_an_unreadable_metar_gets_a_clear_422_and_fills_nothing(http, world, db, metar):
    answer = http.post("/api/v1/conditions", json={"elevation_ft": 500, "metar": metar})
    assert answer.status_code == 422
    assert "METAR" in answer.json()["detail"]
    assert "wind_kt" not in answer.json()
    before = db.scalar(select(func.count()).select_from(Sortie))
    refused = http.post("/api/v1/sorties", json={
        "flown_at": "2026-11-20T10:00:00Z", "aircraft_id": world.aircraft.id, "pilot_id": world.student.id,
        "site_id": world.site.id, "metar": metar})
    assert refused.status_code == 422 and "METAR" in refused.json()["detail"]
    db.expire_all()
    assert db.scalar(select(func.count()).select_from(Sortie)) == before


@pytest.mark.parametrize(("wind_dir_deg", "landing_dir_deg", "headwind_kt", "crosswind_kt"), [
    (270, 270, 20.0, 0.0),  # straight down the landing direction: all headwind
    (360, 270, 0.0, 20.0),  # at 90 degrees, from the right: all crosswind
    (180, 270, 0.0, -20.0),  # at 90 degrees, from the left
    (90, 270, -20.0, 0.0),  # from behind: a tailwind, shown as negative headwind
    (300, 270, 17.3, 10.0),  # 30 degrees off: 20 cos 30 and 20 sin 30
], ids=["down-the-direction", "90-right", "90-left", "from-behind", "30-off"])
def test_head_and_crosswind(http, wind_dir_deg, landing_dir_deg, headwind_kt, crosswind_kt):
    # Source: plain trigonometry (headwind = V cos a, crosswind = V sin a), common practice.
    body = http.post("/api/v1/conditions", json={"wind_dir_deg": wind_dir_deg, "wind_kt": 20,
                                                 "landing_dir_deg": landing_dir_deg}).json()
    assert body["headwind_kt"] == pytest.approx(headwind_kt, abs=0.05)
    assert body["crosswind_kt"] == pytest.approx(crosswind_kt, abs=0.05)


def test_conditions_need_a_sign_in(live_url):
    answer = httpx.post(f"{live_url}/api/v1/conditions", json={"elevation_ft": 0})
    assert answer.status_code == 401
