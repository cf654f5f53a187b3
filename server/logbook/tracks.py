"""Import a recorded track for a sortie, and accept its detected autorotations into attempts."""
import hashlib
from datetime import datetime

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.compute.track_autorotations import SiteInfo, TrackAnalysis, analyse_track
from server.compute.track_files import TrackError, read_track
from server.compute.track_geo import along_landing_direction_ft
from server.errors import Conflict, Forbidden, Invalid, NotFound
from server.logbook import service as logbook
from server.logbook.models import Attempt, Sortie, Track
from server.logbook.schemas import AttemptFields
from server.people import service as people
from server.people.models import Person
from server.records import audit

# Figures of a detection that fill an attempt's fields when accepted (rotor RPM and the grade stay typed;
# groundspeeds are not airspeeds, so entry and descent KIAS stay typed too).
FILLED_FIELDS = ("entry_height_ft", "flare_height_ft", "touchdown_speed_kt", "point_error_ft")
_FIELD_RANGES = {"entry_height_ft": (0, 10000), "flare_height_ft": (0, 1000), "touchdown_speed_kt": (0, 100),
                 "point_error_ft": (-5000, 5000)}
GROUND_TERMINATIONS = ("touchdown", "to_hover")


def _require_editable(session: Session, *, actor: Person, sortie: Sortie) -> None:
    if not logbook.may_edit_sortie(person=actor, sortie=sortie):
        raise Forbidden("Only the sortie's instructor or a chief pilot can import its track.")
    if sortie.state != "draft":
        raise Conflict("This sortie is signed; a track can only be imported into a draft (make an amendment first).")


def get_track(session: Session, *, track_id: int, viewer: Person) -> Track:
    track = session.get(Track, track_id)
    if track is None:
        raise NotFound("No such track.")
    sortie = session.get(Sortie, track.sortie_id)
    if sortie is None or not logbook.may_view(session, viewer=viewer, sortie=sortie):
        raise NotFound("No such track.")
    return track


def tracks_of(session: Session, *, sortie: Sortie) -> list[Track]:
    return list(session.scalars(select(Track).where(Track.sortie_id == sortie.id).order_by(Track.id)))


def _site_info(sortie: Sortie) -> SiteInfo:
    site = sortie.site
    return SiteInfo(elevation_ft=site.elevation_ft, aim_lat_deg=site.aim_lat_deg, aim_lon_deg=site.aim_lon_deg,
                    landing_dirs_deg=tuple(float(d) for d in site.landing_dirs_deg or ()))


def _stamp(moment: datetime | None) -> str | None:
    return moment.isoformat() if moment is not None else None


def detections_json(analysis: TrackAnalysis) -> list[dict]:
    return [
        {
            "index": d.index, "start_at": _stamp(d.start_at), "end_at": _stamp(d.end_at),
            "flare_at": _stamp(d.flare_at), "termination": d.termination, **d.figures,
            "uncertainty": d.uncertainty, "unmeasured": d.unmeasured, "landing_dir_deg": d.landing_dir_deg,
            "end_lat_deg": round(d.end_lat_deg, 7), "end_lon_deg": round(d.end_lon_deg, 7),
            "profile": d.profile,
        }
        for d in analysis.detections
    ]


def already_imported(session: Session, *, sortie: Sortie, data: bytes) -> Track | None:
    """The same file sent again (a resend from the outbox, a second tap) is the same track."""
    digest = hashlib.sha256(data).hexdigest()
    return session.scalar(select(Track).where(Track.sortie_id == sortie.id, Track.sha256 == digest))


def import_track(session: Session, *, actor: Person, sortie: Sortie, data: bytes, filename: str = "",
                 format: str | None = None, max_bytes: int) -> Track:
    """Read, check and measure the file; keep it with the sortie. A bad file raises Invalid and stores nothing;
    a file already imported for this sortie gives its track back."""
    _require_editable(session, actor=actor, sortie=sortie)
    if (existing := already_imported(session, sortie=sortie, data=data)) is not None:
        return existing
    if len(data) > max_bytes:
        raise Invalid(f"The file is {len(data) / 1e6:.1f} MB; tracks up to {max_bytes / 1e6:.0f} MB can be imported.")
    sortie_day = people.local_date(session, sortie.flown_at)
    try:
        parsed = read_track(data, format=format or None, date_hint=sortie_day)
    except TrackError as error:
        raise Invalid(error.message) from None
    first_day, last_day = people.local_date(session, parsed.started_at), people.local_date(session, parsed.ended_at)
    if not first_day <= sortie_day <= last_day:
        raise Invalid(f"This track was recorded on {first_day.isoformat()}, but the sortie was flown on "
                      f"{sortie_day.isoformat()}: import the track of that day.")
    analysis = analyse_track(parsed, _site_info(sortie))
    track = Track(
        sortie_id=sortie.id, filename=(filename or "")[:255], format=parsed.format,
        sha256=hashlib.sha256(data).hexdigest(), size_bytes=len(data), raw=data, points=parsed.points,
        sample_rate_hz=analysis.sample_rate_hz, started_at=parsed.started_at, ended_at=parsed.ended_at,
        has_doppler_speed=analysis.has_doppler_speed, ground_ref=analysis.ground_ref,
        detections=detections_json(analysis), notes=analysis.notes, uploaded_by_id=actor.id,
    )
    session.add(track)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="track", entity_id=track.id,
                 after={"sortie_id": sortie.id, "sha256": track.sha256, "format": track.format,
                        "points": track.points, "detections": len(track.detections)})
    return track


def detection_of(track: Track, index: int) -> dict:
    for detection in track.detections:
        if detection["index"] == index:
            return detection
    raise NotFound(f"Track {track.id} has no detection {index}.")


def _measured_values(detection: dict, *, sortie: Sortie, landing_dir_deg: float | None) -> dict[str, float]:
    """The figures an attempt takes, the point error along the attempt's own landing direction if it has one."""
    values = {name: detection.get(name) for name in FILLED_FIELDS if detection.get(name) is not None}
    site = sortie.site
    if ("point_error_ft" in values and landing_dir_deg is not None and site.aim_lat_deg is not None
            and landing_dir_deg != detection.get("landing_dir_deg")):
        along, _ = along_landing_direction_ft(
            lat_deg=detection["end_lat_deg"], lon_deg=detection["end_lon_deg"], aim_lat_deg=site.aim_lat_deg,
            aim_lon_deg=site.aim_lon_deg, landing_dir_deg=landing_dir_deg)
        values["point_error_ft"] = float(round(along))
    for name, value in values.items():
        low, high = _FIELD_RANGES[name]
        values[name] = min(high, max(low, value))  # a height a few feet below the reference is the ground
    return values


def accept_detection(session: Session, *, actor: Person, track: Track, index: int, attempt_id: int | None = None,
                     maneuver: str | None = None, termination: str | None = None) -> Attempt:
    """Fill an attempt (an existing one, or a new one) with a detection's measured figures."""
    sortie = session.get(Sortie, track.sortie_id)
    _require_editable(session, actor=actor, sortie=sortie)
    detection = detection_of(track, index)
    existing = None
    if attempt_id is not None:
        existing = session.get(Attempt, attempt_id)
        if existing is None or existing.sortie_id != sortie.id:
            raise Invalid(f"Attempt {attempt_id} is not in this track's sortie.")
    if termination is None:
        termination = existing.termination if existing is not None else None
    if detection["termination"] == "power_recovery":
        termination = termination or "power_recovery"
        if termination != "power_recovery":
            raise Invalid("The track shows a power recovery here; the attempt's termination must be power_recovery.")
    elif termination not in GROUND_TERMINATIONS:
        raise Invalid("The track shows an end at the ground, which a receiver cannot tell apart between a touchdown "
                      "and a termination to a hover: choose termination touchdown or to_hover.")
    if existing is None and maneuver is None:
        raise Invalid("Say which maneuver this was (straight_in, turn_180, turn_360 or hovering).")

    landing_dir = existing.landing_dir_deg if existing is not None else None
    if landing_dir is None:
        landing_dir = detection.get("landing_dir_deg")
    values = _measured_values(detection, sortie=sortie, landing_dir_deg=landing_dir)
    fields = {name: getattr(existing, name) for name in AttemptFields.model_fields} if existing is not None else {}
    fields |= {"termination": termination, "landing_dir_deg": landing_dir, **values}
    if maneuver is not None:
        fields["maneuver"] = maneuver
    try:
        checked = AttemptFields.model_validate(fields)
    except ValueError as error:
        raise Invalid(f"The measured figures do not fit the attempt: {error}") from None
    if existing is None:
        attempt = logbook.add_attempt(session, actor=actor, sortie=sortie, data=checked)
    else:
        attempt = logbook.update_attempt(session, actor=actor, attempt=existing, data=checked)
    measured = {name: entry for name, entry in (attempt.measured or {}).items() if name not in values}
    for name, value in values.items():
        measured[name] = {"value": value, "uncertainty": detection["uncertainty"].get(name),
                          "track_id": track.id, "track_sha256": track.sha256, "detection": index}
    attempt.measured = measured
    session.flush()
    audit.append(session, actor_id=actor.id, action="accept_detection", entity="attempt", entity_id=attempt.id,
                 after={"track_id": track.id, "detection": index, "measured": sorted(values)})
    return attempt
