"""Track files read back: written by the libraries' own writers (gpxpy, pynmeagps, aerofiles) and by hand
per the published formats (GPX 1.1 schema with Garmin's TrackPointExtension, NMEA 0183 sentences with
the XOR checksum, IGC B records per the FAI IGC specification); bad files refused with a reason."""
import datetime as dt
import io
from functools import reduce
from xml.etree import ElementTree

import gpxpy
import gpxpy.gpx
import pytest
from aerofiles.igc import Writer as IgcWriter
from pynmeagps import GET, NMEAMessage

from server.compute.track_files import KT_PER_MS, TrackError, detect_format, read_track

START = dt.datetime(2026, 10, 14, 9, 30, tzinfo=dt.timezone.utc)
N = 30


def points(n=N):
    """A steady climb east at 2 m/s, 30 m/s over the ground, one reading a second."""
    for i in range(n):
        yield START + dt.timedelta(seconds=i), 50.6, -3.4 + i * 0.00042, 100.0 + 2 * i, 30.0, 90.0


def gpx_by_gpxpy(version: str, speed_in_extension: bool = False) -> bytes:
    gpx = gpxpy.gpx.GPX()
    track = gpxpy.gpx.GPXTrack()
    segment = gpxpy.gpx.GPXTrackSegment()
    gpx.tracks.append(track)
    track.segments.append(segment)
    for at, lat, lon, alt, speed, course in points():
        point = gpxpy.gpx.GPXTrackPoint(lat, lon, elevation=alt, time=at)
        point.horizontal_dilution, point.vertical_dilution = 0.9, 1.6
        if speed_in_extension:
            gpx.nsmap["gpxtpx"] = "http://www.garmin.com/xmlschemas/TrackPointExtension/v2"
            extension = ElementTree.Element("{http://www.garmin.com/xmlschemas/TrackPointExtension/v2}TrackPointExtension")
            ElementTree.SubElement(extension, "{http://www.garmin.com/xmlschemas/TrackPointExtension/v2}speed").text = str(speed)
            ElementTree.SubElement(extension, "{http://www.garmin.com/xmlschemas/TrackPointExtension/v2}course").text = str(course)
            point.extensions.append(extension)
        else:
            point.speed, point.course = speed, course
        segment.points.append(point)
    return gpx.to_xml(version=version).encode()


def nmea_by_pynmeagps(n=N, *, status="A", quality=1, with_gsa=True) -> bytes:
    out = io.BytesIO()
    for at, lat, lon, alt, speed, course in points(n):
        out.write(NMEAMessage("GP", "RMC", GET, time=at.time(), status=status, lat=lat, NS="N", lon=lon, EW="W",
                              spd=speed * KT_PER_MS, cog=course, date=at.date(), posMode="A").serialize())
        out.write(NMEAMessage("GP", "GGA", GET, time=at.time(), lat=lat, NS="N", lon=lon, EW="W", quality=quality,
                              numSV=9, HDOP=0.9, alt=alt, altUnit="M", sep=48.0, sepUnit="M").serialize())
        if with_gsa:
            out.write(NMEAMessage("GP", "GSA", GET, opMode="A", navMode=3, PDOP=1.8, HDOP=0.9, VDOP=1.6).serialize())
    return out.getvalue()


def checksum(body: str) -> str:
    """NMEA 0183: XOR of every character between '$' and '*', two hex digits."""
    return f"{reduce(lambda a, c: a ^ ord(c), body, 0):02X}"


def hand_nmea(n=N) -> bytes:
    lines = []
    for at, lat, lon, alt, speed, course in points(n):
        clock = at.strftime("%H%M%S") + ".00"
        lat_text = f"{int(lat):02d}{(lat - int(lat)) * 60:08.5f}"
        lon_text = f"{int(-lon):03d}{(-lon - int(-lon)) * 60:08.5f}"
        for body in (f"GPGGA,{clock},{lat_text},N,{lon_text},W,2,10,0.8,{alt:.1f},M,48.0,M,,",
                     f"GPVTG,{course:.1f},T,,M,{speed * KT_PER_MS:.2f},N,{speed * 3.6:.2f},K,D"):
            lines.append(f"${body}*{checksum(body)}")
    lines.insert(0, "$GPRMC,{},A,5036.00000,N,00324.00000,W,0.0,0.0,141026,,,D*{}".format(
        "092959.00", checksum("GPRMC,092959.00,A,5036.00000,N,00324.00000,W,0.0,0.0,141026,,,D")))
    return ("\r\n".join(lines) + "\r\n").encode()


def igc_by_aerofiles(gnss=True) -> bytes:
    out = io.BytesIO()
    writer = IgcWriter(out)
    writer.write_logger_id("XXX", "ABC")
    writer.write_date(START.date())
    for at, lat, lon, alt, _, _ in points():
        writer.write_fix(at.time(), latitude=lat, longitude=lon, valid=True, pressure_alt=int(alt) - 30,
                         gps_alt=int(alt) if gnss else 0)
    return out.getvalue()


def hand_csv(rows=None) -> bytes:
    lines = ["time,lat,lon,alt_m,speed_kt,course_deg"]
    for at, lat, lon, alt, speed, course in rows or points():
        lines.append(f"{at.isoformat()},{lat},{lon},{alt},{speed * KT_PER_MS:.2f},{course}")
    return ("\n".join(lines) + "\n").encode()


HAND_GPX_11 = ("""<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="hand" xmlns="http://www.topografix.com/GPX/1/1"
     xmlns:tpx="http://www.garmin.com/xmlschemas/TrackPointExtension/v1">
<trk><trkseg>
""" + "".join(
    f"""<trkpt lat="{lat}" lon="{lon}"><ele>{alt}</ele><time>{at.strftime('%Y-%m-%dT%H:%M:%S.%f')[:-4]}Z</time>
<fix>3d</fix><hdop>1.1</hdop><extensions><tpx:TrackPointExtension><tpx:speed>{speed}</tpx:speed>
<tpx:course>{course}</tpx:course></tpx:TrackPointExtension></extensions></trkpt>
""" for at, lat, lon, alt, speed, course in points()) + "</trkseg></trk></gpx>\n").encode()


@pytest.mark.parametrize("name, data, fmt, doppler", [
    ("GPX 1.0 by gpxpy (speed element)", gpx_by_gpxpy("1.0"), "gpx", True),
    ("GPX 1.1 by gpxpy (gpxtpx extension)", gpx_by_gpxpy("1.1", speed_in_extension=True), "gpx", True),
    ("GPX 1.1 by gpxpy without speed", gpx_by_gpxpy("1.1"), "gpx", False),
    ("GPX 1.1 by hand (TrackPointExtension v1)", HAND_GPX_11, "gpx", True),
    ("NMEA RMC+GGA+GSA by pynmeagps", nmea_by_pynmeagps(), "nmea", True),
    ("NMEA GGA+VTG by hand, checksums per NMEA 0183", hand_nmea(), "nmea", True),
    ("IGC by aerofiles", igc_by_aerofiles(), "igc", False),
    ("CSV by hand", hand_csv(), "csv", True),
])
def test_each_format_reads_back_what_was_written(name, data, fmt, doppler):
    assert detect_format(data) == fmt
    track = read_track(data)
    assert track.format == fmt
    assert track.points == N
    assert track.started_at == START
    assert track.sample_rate_hz == pytest.approx(1.0)
    # IGC keeps thousandths of a minute (about 2 m); the others keep more.
    assert track.lat_deg[0] == pytest.approx(50.6, abs=2e-5)
    assert track.lon_deg[-1] == pytest.approx(-3.4 + (N - 1) * 0.00042, abs=2e-5)
    assert track.alt_m[-1] - track.alt_m[0] == pytest.approx(2 * (N - 1), abs=1.0)
    assert track.has_doppler_speed is doppler
    if doppler:
        assert track.speed_ms[5] == pytest.approx(30.0, abs=0.01)
        assert track.course_deg[5] == pytest.approx(90.0)


def test_nmea_dop_and_differential_fix_are_kept():
    track = read_track(nmea_by_pynmeagps())
    assert track.hdop[0] == pytest.approx(0.9) and track.vdop[0] == pytest.approx(1.6)
    assert track.fix_kind == "gps"
    assert read_track(hand_nmea()).fix_kind == "sbas"  # GGA quality 2: differential (SBAS/DGPS)


def test_nmea_heights_are_above_mean_sea_level_and_gpx_does_not_say():
    # NMEA 0183 GGA: antenna altitude above mean sea level (geoid separation apart); GPX 1.1 leaves the datum open.
    assert read_track(nmea_by_pynmeagps()).altitude_datum == "msl"
    assert read_track(gpx_by_gpxpy("1.1")).altitude_datum == "unstated"


def test_igc_without_gnss_altitude_falls_back_to_pressure_altitude():
    track = read_track(igc_by_aerofiles(gnss=False))
    assert track.altitude_source == "pressure" and track.altitude_datum == "pressure_1013"
    assert track.alt_m[0] == pytest.approx(70.0)


def test_subsecond_times_are_kept():
    rows = [(START + dt.timedelta(seconds=i * 0.1), 50.6, -3.4, 100.0, 30.0, 90.0) for i in range(50)]
    track = read_track(hand_csv(rows))
    assert track.sample_rate_hz == pytest.approx(10.0)
    assert track.t_s[-1] == pytest.approx(4.9)


def backwards_csv() -> bytes:
    rows = list(points())
    rows[10], rows[11] = rows[11], rows[10]
    return hand_csv(rows)


def gap_csv() -> bytes:
    rows = list(points())
    rows = rows[:10] + [(at + dt.timedelta(seconds=60), *rest) for at, *rest in rows[10:]]
    return hand_csv(rows)


@pytest.mark.parametrize("data, code, words", [
    (b"", "empty", "empty"),
    (b"  \n", "empty", "empty"),
    (gpx_by_gpxpy("1.1")[:-300], "truncated", "cut short"),
    (nmea_by_pynmeagps()[:-20], "truncated", "cut short"),
    (hand_csv()[:-25], "truncated", "cut short"),
    (b"%PDF-1.7\n1 0 obj\n", "wrong_format", "not a track"),
    (b"name,email\nA,b@example.org\n", "wrong_format", "not a track"),
    (nmea_by_pynmeagps(status="V", quality=0), "no_fix", "never had a position fix"),
    (backwards_csv(), "time_backwards", "Time goes backwards"),
    (gap_csv(), "gap", "gap of 61 s"),
    (hand_csv().replace(b",alt_m,", b",height,"), "no_altitude", "no alt_m column"),
    (gpx_by_gpxpy("1.1").replace(b"<ele>", b"<!--").replace(b"</ele>", b"-->"), "no_altitude", "no altitude"),
    (b"".join(line + b"\r\n" for line in nmea_by_pynmeagps().splitlines() if b"GGA" not in line),
     "no_altitude", "no altitude"),
])
def test_bad_files_are_refused_with_a_reason(data, code, words):
    with pytest.raises(TrackError) as refused:
        read_track(data)
    assert refused.value.code == code
    assert words in refused.value.message


def test_a_format_named_by_the_caller_must_fit_the_content():
    with pytest.raises(TrackError) as refused:
        read_track(hand_csv(), format="gpx")
    assert refused.value.code in ("truncated", "wrong_format")
    with pytest.raises(TrackError, match="Unknown track format"):
        read_track(hand_csv(), format="kml")
