"""Practice autorotations found and measured in synthetic tracks with known truth.

The flights come from the kinematic model in tests/compute/flight_model.py, sampled with receiver errors
as the GPS SPS Performance Standard (2008) gives them (about 3 m horizontal, 5 m vertical, Doppler speed
about 0.2 m/s, all 95 %). Distances from the aim point are checked against geographiclib (Karney's
geodesics on WGS 84), a reference library used only in the tests.
"""
import math
from functools import lru_cache

import pytest
from geographiclib.geodesic import Geodesic

from server.compute.track_autorotations import SiteInfo, analyse_track
from server.compute.track_files import read_track
from server.compute.track_geo import along_landing_direction_ft, signed_angle_deg
from tests.compute.flight_model import FT, Flight, rows_to_csv, sample, to_latlon, training_sortie

ELEVATION_M = 120.0
AIM = (50.60, -3.40)
SITE = SiteInfo(elevation_ft=ELEVATION_M / FT, aim_lat_deg=AIM[0], aim_lon_deg=AIM[1], landing_dirs_deg=(90.0, 270.0))
CHECKED = ("entry_height_ft", "entry_groundspeed_kt", "descent_groundspeed_kt", "descent_rate_fpm",
           "flare_height_ft", "recovery_height_ft", "touchdown_speed_kt")


@lru_cache(maxsize=None)
def sortie():
    return training_sortie()


def analysed(flight: Flight, *, rate_hz: float, seed: int, doppler: bool = True, site: SiteInfo = SITE):
    rows = sample(flight, rate_hz=rate_hz, seed=seed, doppler=doppler, elevation_m=ELEVATION_M, origin=AIM)
    track = read_track(rows_to_csv(rows))
    return track, analyse_track(track, site)


def truth_point_error_ft(truth) -> float:
    """Along the landing direction from the aim point, by geographiclib (the reference)."""
    lat, lon = to_latlon(truth.end_east_m, truth.end_north_m, origin=AIM)
    line = Geodesic.WGS84.Inverse(AIM[0], AIM[1], lat, lon)
    landing_dir = 270.0
    return line["s12"] * math.cos(math.radians(line["azi1"] - landing_dir)) / FT


def matched(track, analysis, flight):
    """Pair each detection with the modelled autorotation it overlaps."""
    pairs = []
    for detection in analysis.detections:
        start = (detection.start_at - track.started_at).total_seconds()
        truth = min(flight.truths, key=lambda tr: abs(tr.entry_t - start))
        assert abs(truth.entry_t - start) < 5, f"a detection at {start:.0f} s matches no autorotation"
        pairs.append((detection, truth))
    return pairs


@pytest.mark.parametrize("rate_hz", [1, 5, 10])
@pytest.mark.parametrize("seed", [11, 12])
def test_every_autorotation_is_found_once_and_each_figure_is_within_its_stated_uncertainty(rate_hz, seed):
    flight = sortie()
    track, analysis = analysed(flight, rate_hz=rate_hz, seed=seed)
    pairs = matched(track, analysis, flight)
    assert len(pairs) == len(flight.truths) == 4  # nothing in the cruise, climbs, hover work or the approach
    assert len({id(truth) for _, truth in pairs}) == 4
    assert analysis.ground_ref == "on_ground_readings"
    for detection, truth in pairs:
        assert detection.termination == truth.termination
        for name in CHECKED:
            expected = getattr(truth, name)
            value = detection.figures[name]
            if expected is None:
                assert value is None and name in detection.unmeasured
                continue
            assert value is not None, f"{name} not measured: {detection.unmeasured.get(name)}"
            assert abs(value - expected) <= detection.uncertainty[name], (
                f"{name} at {rate_hz} Hz: {value} ± {detection.uncertainty[name]} but truly {expected:.1f}")
        if truth.termination == "ground":
            error = detection.figures["point_error_ft"]
            assert abs(error - truth_point_error_ft(truth)) <= detection.uncertainty["point_error_ft"]
            along_track = signed_angle_deg(truth.track_deg, 270.0)
            assert abs(detection.figures["track_error_deg"] - along_track) <= detection.uncertainty["track_error_deg"]
        else:
            assert detection.figures["point_error_ft"] is None
            assert detection.unmeasured["point_error_ft"] == "a power recovery does not land"


def test_flare_height_at_one_hertz_is_no_better_than_about_twenty_feet():
    # shared/TRACKS.md, derived: at 1,400-2,000 ft/min a 1 Hz track times the flare to ±12-17 ft,
    # plus the vertical error: about ±20 ft in all. 10 Hz must claim better than 1 Hz.
    _, slow = analysed(sortie(), rate_hz=1, seed=11)
    _, fast = analysed(sortie(), rate_hz=10, seed=11)
    slow_flare = [d.uncertainty["flare_height_ft"] for d in slow.detections]
    fast_flare = [d.uncertainty["flare_height_ft"] for d in fast.detections]
    assert min(slow_flare) >= 20
    assert all(f < s for f, s in zip(fast_flare, slow_flare))


def test_without_doppler_speed_the_touchdown_speed_is_not_measurable_and_says_why():
    track, analysis = analysed(sortie(), rate_hz=5, seed=11, doppler=False)
    assert not track.has_doppler_speed
    ground = [d for d in analysis.detections if d.termination == "ground"]
    assert len(ground) == 3
    for detection in ground:
        assert detection.figures["touchdown_speed_kt"] is None
        assert "no Doppler speed" in detection.unmeasured["touchdown_speed_kt"]
        assert detection.figures["flare_height_ft"] is not None


def test_a_site_without_aim_point_or_directions_leaves_those_figures_unmeasured_with_reasons():
    site = SiteInfo(elevation_ft=ELEVATION_M / FT)
    _, analysis = analysed(sortie(), rate_hz=5, seed=12, site=site)
    assert len(analysis.detections) == 4
    for detection in analysis.detections:
        if detection.termination == "ground":
            assert detection.unmeasured["point_error_ft"] == "the site has no aim point"
        assert detection.unmeasured["track_error_deg"] == "the site has no landing directions"


def test_heights_fall_back_to_the_site_elevation_when_the_track_never_sits_on_the_ground():
    flight = Flight(heading_deg=270.0, height=[900 * FT], speed=[60 * 1852 / 3600])
    flight.fly(30)
    flight.autorotation(end="recovery", rate_fpm=1600, flare_ft=150, recovery_bottom_ft=100)
    track, analysis = analysed(flight, rate_hz=5, seed=3)
    assert analysis.ground_ref == "site_elevation"
    (detection,) = analysis.detections
    truth = flight.truths[0]
    assert detection.termination == "power_recovery"
    # Without readings on the ground the whole vertical error of the receiver stays in the heights.
    assert detection.uncertainty["recovery_height_ft"] >= 16.0  # 5 m
    assert abs(detection.figures["recovery_height_ft"] - truth.recovery_height_ft) <= detection.uncertainty["recovery_height_ft"]


@pytest.mark.parametrize("kind", ["cruise_and_climbs", "normal_approaches", "hover_work"])
def test_no_autorotation_is_found_in_ordinary_flying(kind):
    # Normal approaches run at about 500-800 ft/min (common practice), far from an autorotation's 1,400+.
    flight = Flight(heading_deg=90.0)
    flight.fly(20)
    if kind == "cruise_and_climbs":
        flight.take_off_and_climb(to_ft=1500, climb_fpm=1000)
        flight.fly(120, speed_to_kt=100, turn_deg=270)
        flight.fly(60, vs_to_fpm=-900, vs_ramp_s=5)  # a cruise descent
        flight.fly(30, vs_to_fpm=0, vs_ramp_s=5)
    elif kind == "normal_approaches":
        for rate in (500, 800, 1000):
            flight.take_off_and_climb(to_ft=600)
            flight.fly(30, turn_deg=180)
            flight.normal_approach(rate_fpm=rate)
    else:
        flight.fly(3, vs_to_fpm=200, vs_ramp_s=1)
        flight.fly(3, vs_to_fpm=0, vs_ramp_s=1)
        for _ in range(3):
            flight.fly(15, speed_to_kt=8, turn_deg=180)  # hover taxi with turns
            flight.fly(6, speed_to_kt=0, turn_deg=360)  # pedal turn
            flight.fly(4, vs_to_fpm=-150, vs_ramp_s=1, stop_at_height_ft=0)  # set down and lift again
            flight.fly(5, vs_to_fpm=0)
            flight.fly(3, vs_to_fpm=200, vs_ramp_s=1)
            flight.fly(3, vs_to_fpm=0, vs_ramp_s=1)
    for rate_hz in (1, 10):
        _, analysis = analysed(flight, rate_hz=rate_hz, seed=5)
        assert analysis.detections == []


@pytest.mark.parametrize("landing_dir", [0.0, 90.0, 225.0, 333.0])
@pytest.mark.parametrize("east_m, north_m", [(30.0, -12.0), (-80.0, 45.0), (400.0, 300.0)])
def test_distance_along_the_landing_direction_agrees_with_geographiclib(landing_dir, east_m, north_m):
    # Reference: geographiclib's inverse geodesic on WGS 84 (Karney 2013).
    lat, lon = to_latlon(east_m, north_m, origin=AIM)
    along, across = along_landing_direction_ft(lat_deg=lat, lon_deg=lon, aim_lat_deg=AIM[0], aim_lon_deg=AIM[1],
                                               landing_dir_deg=landing_dir)
    line = Geodesic.WGS84.Inverse(AIM[0], AIM[1], lat, lon)
    angle = math.radians(line["azi1"] - landing_dir)
    assert along == pytest.approx(line["s12"] * math.cos(angle) / FT, abs=0.1)
    assert across == pytest.approx(line["s12"] * math.sin(angle) / FT, abs=0.1)


def igc_of(rows, *, pressure_offset_m: float) -> bytes:
    """An IGC file by aerofiles' writer: pressure altitude only (GNSS altitude written as 0, as some loggers do)."""
    import io

    from aerofiles.igc import Writer

    out = io.BytesIO()
    writer = Writer(out)
    writer.write_logger_id("XXX", "TST")
    writer.write_date(rows[0][0].date())
    for at, lat, lon, alt, _, _ in rows[::1]:
        writer.write_fix(at.time(), latitude=lat, longitude=lon, valid=True,
                         pressure_alt=int(round(alt + pressure_offset_m)), gps_alt=0)
    return out.getvalue()


def test_pressure_altitudes_are_referenced_to_the_receivers_own_readings_on_the_ground():
    # A pressure altitude on 1013.25 hPa is off the elevation by about 30 ft per hPa (common practice):
    # 150 m here, as on a day of about 995 hPa. Readings on the ground at the site cancel it.
    flight = sortie()
    rows = sample(flight, rate_hz=1, seed=11, doppler=False, elevation_m=ELEVATION_M, origin=AIM)
    track = read_track(igc_of(rows, pressure_offset_m=150.0))
    assert track.altitude_datum == "pressure_1013"
    analysis = analyse_track(track, SITE)
    assert analysis.ground_ref == "on_ground_readings"
    pairs = matched(track, analysis, flight)
    assert len(pairs) == 4
    for detection, truth in pairs:
        assert abs(detection.figures["entry_height_ft"] - truth.entry_height_ft) <= detection.uncertainty["entry_height_ft"]
        assert detection.figures["touchdown_speed_kt"] is None  # IGC carries no Doppler speed


def test_pressure_altitudes_without_readings_on_the_ground_leave_heights_unmeasured():
    flight = Flight(heading_deg=270.0, height=[900 * FT], speed=[60 * 1852 / 3600])
    flight.fly(30)
    flight.autorotation(end="recovery", rate_fpm=1600, flare_ft=150, recovery_bottom_ft=100)
    rows = sample(flight, rate_hz=1, seed=4, doppler=False, elevation_m=ELEVATION_M, origin=AIM)
    analysis = analyse_track(read_track(igc_of(rows, pressure_offset_m=150.0)), SITE)
    (detection,) = analysis.detections
    assert detection.figures["entry_height_ft"] is None
    assert "pressure altitudes" in detection.unmeasured["entry_height_ft"]
    assert detection.figures["descent_rate_fpm"] is not None  # a rate needs no datum
