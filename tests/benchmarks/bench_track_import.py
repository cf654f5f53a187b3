"""Benchmark, run by hand: a 2-hour sortie at 10 Hz (72,000 points, 12 practice autorotations).

    .venv/bin/python -m tests.benchmarks.bench_track_import [--minutes 120] [--rate 10] [--repeat 5] [--busy-ok]

Flies the kinematic model of tests/compute/flight_model.py, writes the track as GPX (gpxpy's writer) and
NMEA 0183 (pynmeagps's writer), then times in the same run, median of the repeats, per format:
  - parse: the parsing library alone reading the file (gpxpy.parse; pynmeagps parsing every sentence);
  - full:  Flarebook's import (read_track: parse, checks, arrays) plus detection and measurement.
The goals (issue 11): full <= 1 s and full / parse <= 3. Figures count only on an idle machine: the
load average is printed first, and a busy machine gets no figures unless --busy-ok.
"""
import argparse
import io
import statistics
import time

from tests.compute.flight_model import FT, KT, Flight, sample
from tests.benchmarks import machine


def sortie(minutes: float, autorotations: int) -> Flight:
    flight = Flight(heading_deg=270.0)
    flight.fly(60)
    ends = ("touchdown", "recovery", "hover")
    for number in range(autorotations):
        flight.circuit_to_autorotation(at_ft=700 + 20 * (number % 5), end=ends[number % 3], rate_fpm=1400 + 50 * (number % 6))
    while flight.t[-1] < minutes * 60:  # cruise out the rest of the time
        if flight.height[-1] < 5 * FT:
            flight.take_off_and_climb(to_ft=1000)
        flight.fly(min(60.0, minutes * 60 - flight.t[-1] + 0.01), speed_to_kt=90, turn_deg=90)
    return flight


def as_gpx(rows) -> bytes:
    import gpxpy.gpx

    gpx = gpxpy.gpx.GPX()
    track, segment = gpxpy.gpx.GPXTrack(), gpxpy.gpx.GPXTrackSegment()
    gpx.tracks.append(track)
    track.segments.append(segment)
    for at, lat, lon, alt, speed, course in rows:
        point = gpxpy.gpx.GPXTrackPoint(lat, lon, elevation=round(alt, 2), time=at)
        point.speed, point.course = round(speed * KT, 2), round(course, 1)
        segment.points.append(point)
    return gpx.to_xml(version="1.0").encode()


def as_nmea(rows) -> bytes:
    from pynmeagps import GET, NMEAMessage

    out = io.BytesIO()
    for at, lat, lon, alt, speed, course in rows:
        out.write(NMEAMessage("GP", "RMC", GET, time=at.time(), status="A", lat=lat, NS="N", lon=lon, EW="W",
                              spd=round(speed, 2), cog=round(course, 1), date=at.date(), posMode="A").serialize())
        out.write(NMEAMessage("GP", "GGA", GET, time=at.time(), lat=lat, NS="N", lon=lon, EW="W", quality=1,
                              numSV=10, HDOP=0.9, alt=round(alt, 2), altUnit="M", sep=48.0, sepUnit="M").serialize())
    return out.getvalue()


def parse_only(fmt: str, data: bytes) -> None:
    if fmt == "gpx":
        import gpxpy

        gpxpy.parse(data.decode())
    else:
        from pynmeagps import NMEAReader

        for line in data.splitlines():
            NMEAReader.parse(line)


def full_import(data: bytes) -> int:
    from server.compute.track_autorotations import SiteInfo, analyse_track
    from server.compute.track_files import read_track

    track = read_track(data)
    site = SiteInfo(elevation_ft=120 / FT, aim_lat_deg=50.60, aim_lon_deg=-3.40, landing_dirs_deg=(90.0, 270.0))
    return len(analyse_track(track, site).detections)


def median_seconds(work, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        started = time.perf_counter()
        work()
        times.append(time.perf_counter() - started)
    return statistics.median(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--minutes", type=float, default=120)
    parser.add_argument("--rate", type=float, default=10)
    parser.add_argument("--autorotations", type=int, default=12)
    parser.add_argument("--repeat", type=int, default=5)
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)

    flight = sortie(args.minutes, args.autorotations)
    rows = sample(flight, rate_hz=args.rate, seed=7, origin=(50.60, -3.40))
    print(f"{len(rows)} points, {len(flight.truths)} autorotations flown")
    for fmt, data in (("gpx", as_gpx(rows)), ("nmea", as_nmea(rows))):
        found = full_import(data)
        parse = median_seconds(lambda: parse_only(fmt, data), args.repeat)
        full = median_seconds(lambda: full_import(data), args.repeat)
        print(f"{fmt:5s} {len(data) / 1e6:6.1f} MB  parse {parse:6.3f} s  full {full:6.3f} s  "
              f"ratio {full / parse:4.2f}  detected {found}")


if __name__ == "__main__":
    main()
