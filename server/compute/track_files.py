"""Read a recorded flight track (GPX, NMEA 0183, IGC or plain CSV) into plain arrays.

The registry's maintained readers do the parsing (`gpxpy`, `pynmeagps`, `aerofiles`, the standard
`csv` module); this module turns their results into one shape and refuses, with a reason a person
understands, a file that cannot carry the measurement: empty, cut short, of another format, without a
fix or without altitude, with time going backwards or with gaps.
"""
import csv
import io
import math
import re
from dataclasses import dataclass, field
from datetime import date, datetime, time, timedelta, timezone

import numpy as np

FORMATS = ("gpx", "nmea", "igc", "csv")
KT_PER_MS = 3600 / 1852
MS_PER_KT = 1852 / 3600


class TrackError(ValueError):
    """A file that cannot be read as a track; `code` for scripts, the message for people."""

    def __init__(self, code: str, message: str):
        super().__init__(message)
        self.code = code
        self.message = message


@dataclass(frozen=True)
class TrackLimits:
    """What a usable track must satisfy."""

    min_points: int = 10
    # A gap longer than this can hide a whole practice autorotation (at 1,500 ft/min, 20 s is 500 ft).
    max_gap_s: float = 20.0
    # Receivers repeat a time stamp now and then; a step back longer than this is a broken file.
    backwards_tolerance_s: float = 0.0


@dataclass
class Track:
    """One track: times in seconds from `started_at`, positions in WGS 84 degrees, heights in metres."""

    format: str
    started_at: datetime
    t_s: np.ndarray
    lat_deg: np.ndarray
    lon_deg: np.ndarray
    alt_m: np.ndarray
    # Speed over ground measured by the receiver (Doppler), m/s; NaN where the file has none.
    speed_ms: np.ndarray
    course_deg: np.ndarray
    hdop: np.ndarray
    vdop: np.ndarray
    # "sbas" for a differential (SBAS/DGPS/RTK) fix, else "gps".
    fix_kind: str = "gps"
    # What the heights are measured from: "msl" (stated by the format) or "unstated".
    altitude_datum: str = "msl"
    altitude_source: str = "gnss"
    notes: list[str] = field(default_factory=list)

    @property
    def points(self) -> int:
        return int(self.t_s.size)

    @property
    def ended_at(self) -> datetime:
        return self.started_at + timedelta(seconds=float(self.t_s[-1]))

    @property
    def sample_rate_hz(self) -> float:
        steps = np.diff(self.t_s)
        steps = steps[steps > 0]
        return round(float(1.0 / np.median(steps)), 2) if steps.size else 0.0

    @property
    def has_doppler_speed(self) -> bool:
        return bool(np.mean(np.isfinite(self.speed_ms)) >= 0.9)


@dataclass
class _Fix:
    at: datetime
    lat: float
    lon: float
    alt: float = math.nan
    speed_ms: float = math.nan
    course: float = math.nan
    hdop: float = math.nan
    vdop: float = math.nan
    valid: bool = True
    differential: bool = False


def detect_format(data: bytes) -> str:
    """Name the format from the content, not from the file name."""
    head = data[:4096].lstrip(b"\xef\xbb\xbf \t\r\n")
    text = head.decode("utf-8", "replace")
    if text.startswith("<?xml") or text.startswith("<gpx") or "<gpx" in text[:1000]:
        return "gpx"
    if re.search(r"^[$!][A-Z]{2}[A-Z]{3},", text, re.MULTILINE):
        return "nmea"
    if text[:1] == "A" and re.search(r"^(HFDTE|B\d{6})", text, re.MULTILINE):
        return "igc"
    first_line = text.splitlines()[0] if text else ""
    columns = [c.strip().lower() for c in first_line.split(",")]
    if {"time", "lat", "lon"} <= set(columns):
        return "csv"
    raise TrackError(
        "wrong_format",
        "This file is not a track Flarebook can read: expected GPX, NMEA 0183 (RMC/GGA), IGC, "
        "or CSV with the columns time, lat, lon, alt_m.",
    )


def read_track(data: bytes, *, format: str | None = None, date_hint: date | None = None,
               limits: TrackLimits = TrackLimits()) -> Track:
    """Parse `data` (bytes as uploaded) into a checked Track; raise TrackError with the reason."""
    if not data.strip():
        raise TrackError("empty", "The file is empty.")
    fmt = format or detect_format(data)
    if fmt not in FORMATS:
        raise TrackError("wrong_format", f"Unknown track format {fmt!r}: use one of {', '.join(FORMATS)}.")
    reader = {"gpx": _read_gpx, "nmea": _read_nmea, "igc": _read_igc, "csv": _read_csv}[fmt]
    fixes, meta = reader(data, date_hint)
    return _assemble(fmt, fixes, meta, limits)


# --- the formats --------------------------------------------------------------------------------


def _text(data: bytes) -> str:
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        return data.decode("latin-1")


def _float(value) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        return math.nan
    return number if math.isfinite(number) else math.nan


def _extension_value(elements, local_name: str) -> float:
    """A TrackPointExtension child by local name: the namespace URI differs between writers."""
    for element in elements:
        for node in element.iter():
            if node.tag.rsplit("}", 1)[-1].lower() == local_name and node.text:
                return _float(node.text)
    return math.nan


def _read_gpx(data: bytes, date_hint):
    import gpxpy
    import gpxpy.gpx

    try:
        gpx = gpxpy.parse(_text(data))
    except gpxpy.gpx.GPXXMLSyntaxException as error:
        raise TrackError("truncated", f"The GPX file is cut short or damaged ({_first_line(error)}).") from None
    except gpxpy.gpx.GPXException as error:
        raise TrackError("wrong_format", f"The GPX file could not be read: {_first_line(error)}.") from None
    fixes = []
    for track in gpx.tracks:
        for segment in track.segments:
            for point in segment.points:
                if point.time is None:
                    raise TrackError("no_time", "The GPX track points carry no time; a track needs one per point.")
                at = point.time if point.time.tzinfo else point.time.replace(tzinfo=timezone.utc)
                speed = _float(point.speed)
                course = _float(point.course)
                if point.extensions:
                    if math.isnan(speed):
                        speed = _extension_value(point.extensions, "speed")
                    if math.isnan(course):
                        course = _extension_value(point.extensions, "course")
                fix = (point.type_of_gpx_fix or "").lower()
                fixes.append(_Fix(
                    at=at.astimezone(timezone.utc), lat=point.latitude, lon=point.longitude,
                    alt=_float(point.elevation) if fix != "2d" else math.nan,
                    speed_ms=speed, course=course,
                    hdop=_float(point.horizontal_dilution), vdop=_float(point.vertical_dilution),
                    valid=fix != "none", differential=fix == "dgps",
                ))
    return fixes, {"datum": "unstated", "source": "gnss"}


_CHECKSUM = re.compile(rb"\*[0-9A-Fa-f]{2}$")


def _read_nmea(data: bytes, date_hint):
    from pynmeagps import NMEAReader
    from pynmeagps.exceptions import NMEAMessageError, NMEAParseError, NMEAStreamError, NMEATypeError

    day: date | None = None
    by_time: dict[time, _Fix] = {}
    order: list[time] = []
    days: dict[time, date] = {}
    current: _Fix | None = None
    bad_lines = 0
    sentences = 0
    lines = data.splitlines()
    for number, line in enumerate(lines, 1):
        line = line.strip()
        if not line.startswith((b"$", b"!")):
            continue
        try:
            message = NMEAReader.parse(line) if _CHECKSUM.search(line) else None
        except (NMEAMessageError, NMEAParseError, NMEAStreamError, NMEATypeError):
            message = None
        if message is None:
            if number == len(lines):
                raise TrackError("truncated", "The NMEA log ends in the middle of a sentence (the file is cut short).")
            bad_lines += 1
            continue
        sentences += 1
        kind = message.msgID
        if kind in ("RMC", "GGA"):
            at = message.time
            if not isinstance(at, time):
                continue
            if kind == "RMC" and isinstance(getattr(message, "date", None), date):
                day = message.date
            if at not in by_time:
                by_time[at] = _Fix(at=datetime.min, lat=math.nan, lon=math.nan)
                order.append(at)
            current = by_time[at]
            if day is not None:
                days.setdefault(at, day)
            if isinstance(message.lat, float) and isinstance(message.lon, float):
                current.lat, current.lon = message.lat, message.lon
            if kind == "RMC":
                current.valid = current.valid and message.status == "A"
                current.speed_ms = _float(message.spd) * MS_PER_KT
                current.course = _float(message.cog)
            else:
                quality = message.quality if isinstance(message.quality, int) else 0
                current.valid = current.valid and quality in (1, 2, 3, 4, 5, 8)
                current.differential = quality in (2, 4, 5)
                current.alt = _float(message.alt)
                current.hdop = _float(message.HDOP)
        elif current is not None and kind == "GSA":
            if message.navMode == 2:  # 2-D fix: the receiver held the altitude, it did not measure it
                current.alt = math.nan
                current.vdop = math.nan
            elif message.navMode == 3:
                current.vdop = _float(message.VDOP)
                if math.isnan(current.hdop):
                    current.hdop = _float(message.HDOP)
            else:
                current.valid = False
        elif current is not None and kind == "VTG" and math.isnan(current.speed_ms):
            current.speed_ms = _float(message.sogn) * MS_PER_KT
            current.course = _float(message.cogt)
    if not sentences:
        raise TrackError("wrong_format", "No NMEA sentence in this log could be read (bad checksums or another format).")
    if not order:
        raise TrackError("no_fix", "The NMEA log has no RMC or GGA sentence, so it holds no positions.")
    first_day = day or date_hint
    if first_day is None:
        raise TrackError("no_date", "The NMEA log has no RMC sentence, so its date is unknown.")
    fixes = []
    previous: datetime | None = None
    rollover = 0
    for at in order:
        base = days.get(at)
        stamp = datetime.combine(base or first_day, at, tzinfo=timezone.utc) + timedelta(days=rollover)
        if base is None and previous is not None and stamp < previous - timedelta(hours=12):
            rollover += 1  # past midnight in a log without dates
            stamp += timedelta(days=1)
        previous = stamp
        fix = by_time[at]
        fix.at = stamp
        fixes.append(fix)
    meta = {"datum": "msl", "source": "gnss"}
    if bad_lines:
        meta["note"] = f"{bad_lines} damaged NMEA sentence(s) were skipped."
    return fixes, meta


def _read_igc(data: bytes, date_hint):
    from aerofiles.igc import Reader

    parsed = Reader(skip_duplicates=True).read(io.StringIO(_text(data)))
    header = parsed["header"][1] or {}
    records = parsed["fix_records"][1] or []
    if parsed["fix_records"][0] and not records:
        raise TrackError("truncated", "The IGC file's fix records (B records) could not be read: the file is damaged.")
    if records and "utc_date" not in header:
        raise TrackError("no_date", "The IGC file has no date header (HFDTE).")
    fixes = []
    gnss = [r.get("gps_alt") for r in records]
    use_pressure = not any(gnss)  # some loggers write 00000 for the GNSS altitude
    for record in records:
        altitude = record.get("pressure_alt") if use_pressure else record.get("gps_alt")
        fixes.append(_Fix(
            at=record["datetime"].astimezone(timezone.utc), lat=record["lat"], lon=record["lon"],
            alt=_float(altitude), valid=record.get("validity") == "A",
        ))
    source = "pressure" if use_pressure else "gnss"
    return fixes, {"datum": "pressure_1013" if use_pressure else "msl", "source": source}


def _csv_time(text: str) -> datetime:
    text = text.strip().replace("Z", "+00:00")
    try:
        stamp = datetime.fromisoformat(text)
    except ValueError:
        raise TrackError("bad_time", f"The CSV time {text!r} is not an ISO 8601 date and time.") from None
    return (stamp if stamp.tzinfo else stamp.replace(tzinfo=timezone.utc)).astimezone(timezone.utc)


def _read_csv(data: bytes, date_hint):
    rows = csv.DictReader(io.StringIO(_text(data)))
    if rows.fieldnames is None:
        raise TrackError("empty", "The CSV file is empty.")
    names = {name.strip().lower(): name for name in rows.fieldnames if name}
    missing = [column for column in ("time", "lat", "lon") if column not in names]
    if missing:
        raise TrackError("wrong_format", f"The CSV file lacks the column(s) {', '.join(missing)}.")
    if "alt_m" not in names:
        raise TrackError("no_altitude", "The CSV file has no alt_m column: heights cannot be measured.")
    fixes = []
    cut_short = not data.rstrip(b" \t").endswith((b"\n", b"\r"))
    last_line = len(data.rstrip(b"\r\n").splitlines())
    for line, row in enumerate(rows, 2):
        incomplete = None in row or any(row.get(names[c]) in (None, "") for c in ("time", "lat", "lon", "alt_m"))
        if incomplete and cut_short and line == last_line:
            raise TrackError("truncated", f"CSV line {line} is incomplete: the file is cut short.")
        lat, lon = _float(row[names["lat"]]), _float(row[names["lon"]])
        if math.isnan(lat) or math.isnan(lon) or not (-90 <= lat <= 90 and -180 <= lon <= 180):
            if cut_short and line == last_line:
                raise TrackError("truncated", f"CSV line {line} is incomplete: the file is cut short.")
            raise TrackError("bad_position", f"CSV line {line} has no valid position (lat, lon in degrees).")
        speed_kt = _float(row.get(names.get("speed_kt", ""), ""))
        fixes.append(_Fix(
            at=_csv_time(row[names["time"]]), lat=lat, lon=lon, alt=_float(row[names["alt_m"]]),
            speed_ms=speed_kt * MS_PER_KT, course=_float(row.get(names.get("course_deg", ""), "")),
        ))
    return fixes, {"datum": "unstated", "source": "gnss"}


def _first_line(error: Exception) -> str:
    return str(error).strip().splitlines()[0] if str(error).strip() else type(error).__name__


# --- checks common to every format ---------------------------------------------------------------


def _clock(at: datetime) -> str:
    return at.strftime("%H:%M:%S") + " UTC"


def _assemble(fmt: str, fixes: list[_Fix], meta: dict, limits: TrackLimits) -> Track:
    if not fixes:
        raise TrackError("no_points", "The file holds no track points.")
    with_fix = [f for f in fixes if f.valid and math.isfinite(f.lat) and math.isfinite(f.lon)]
    if not with_fix:
        raise TrackError("no_fix", "The receiver never had a position fix in this track (every point is marked invalid).")
    with_alt = [f for f in with_fix if math.isfinite(f.alt)]
    if not with_alt:
        raise TrackError("no_altitude", "The track has no altitude (or only 2-D fixes): heights cannot be measured.")
    if len(with_alt) < 0.5 * len(with_fix):
        raise TrackError("no_altitude", f"Only {len(with_alt)} of {len(with_fix)} points carry an altitude: "
                                        "heights cannot be measured.")
    if len(with_alt) < limits.min_points:
        raise TrackError("too_short", f"The track has only {len(with_alt)} usable points; at least "
                                      f"{limits.min_points} are needed.")
    for earlier, later in zip(with_alt, with_alt[1:]):
        if (earlier.at - later.at).total_seconds() > limits.backwards_tolerance_s:
            raise TrackError("time_backwards", f"Time goes backwards in the track at {_clock(later.at)} "
                                               f"(after {_clock(earlier.at)}): the file is damaged or two logs were joined.")
    # Repeated time stamps: keep the first reading of each instant.
    unique = [with_alt[0]] + [b for a, b in zip(with_alt, with_alt[1:]) if b.at > a.at]
    started = unique[0].at
    t = np.array([(f.at - started).total_seconds() for f in unique])
    gaps = np.diff(t)
    worst = int(np.argmax(gaps)) if gaps.size else 0
    if gaps.size and gaps[worst] > limits.max_gap_s:
        raise TrackError("gap", f"The track has a gap of {gaps[worst]:.0f} s after {_clock(unique[worst].at)} "
                                f"(more than {limits.max_gap_s:.0f} s): an autorotation could be hidden in it.")
    array = lambda name: np.array([getattr(f, name) for f in unique], dtype=float)  # noqa: E731
    notes = []
    if len(with_fix) < len(fixes):
        notes.append(f"{len(fixes) - len(with_fix)} point(s) without a fix were left out.")
    if len(with_alt) < len(with_fix):
        notes.append(f"{len(with_fix) - len(with_alt)} point(s) without altitude were left out.")
    if meta.get("note"):
        notes.append(meta["note"])
    differential = np.mean([f.differential for f in unique]) >= 0.9
    return Track(
        format=fmt, started_at=started, t_s=t, lat_deg=array("lat"), lon_deg=array("lon"), alt_m=array("alt"),
        speed_ms=array("speed_ms"), course_deg=array("course"), hdop=array("hdop"), vdop=array("vdop"),
        fix_kind="sbas" if differential else "gps", altitude_datum=meta["datum"],
        altitude_source=meta["source"], notes=notes,
    )
