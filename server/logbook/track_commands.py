"""Command line: `flarebook track import SORTIE_ID FILE`."""
from pathlib import Path

from server.config import get_settings
from server.db import command_session
from server.errors import FlarebookError, NotFound
from server.logbook import tracks
from server.logbook.models import Sortie
from server.people import service as people
from server.people.models import Person


def _figure(detection: dict, name: str, unit: str) -> str:
    value = detection.get(name)
    if value is None:
        return f"{name.split('_')[0]} not measured"
    return f"{value:g} ±{detection['uncertainty'].get(name, 0):g} {unit}"


def cmd_track_import(args) -> str:
    path = Path(args.file)
    if not path.is_file():
        raise FlarebookError(f"No file at {path}.")
    data = path.read_bytes()
    settings = get_settings()
    with command_session(settings.database_url) as session:
        sortie = session.get(Sortie, args.sortie_id)
        if sortie is None:
            raise NotFound(f"No sortie {args.sortie_id}.")
        if args.as_email:
            actor = people.find_by_email(session, args.as_email)
            if actor is None or not actor.active:
                raise FlarebookError(f"No active person signs in as {args.as_email}.")
        else:
            actor = session.get(Person, sortie.instructor_id)  # the sortie's own instructor
        track = tracks.import_track(session, actor=actor, sortie=sortie, data=data, filename=path.name,
                                    format=args.format, max_bytes=settings.track_upload_max_bytes)
        lines = [f"Track {track.id} for sortie {sortie.id}: {track.format}, {track.points} points at "
                 f"{track.sample_rate_hz:g} Hz, heights from {track.ground_ref.replace('_', ' ')}, "
                 f"{len(track.detections)} practice autorotation(s) found"]
        for d in track.detections:
            end = "power recovery" if d["termination"] == "power_recovery" else "at the ground"
            lines.append(f"  #{d['index']} {d['start_at'][11:19]} UTC, {end}: entry "
                         f"{_figure(d, 'entry_height_ft', 'ft')}, flare {_figure(d, 'flare_height_ft', 'ft')}, "
                         f"touchdown {_figure(d, 'touchdown_speed_kt', 'kt')}")
        lines.append("Figures are measured from a recorded track, with their uncertainty: the flight manual, "
                     "approved procedures and the instructor's judgement come first.")
        return "\n".join(lines)


def add_commands(sub) -> None:
    track = sub.add_parser("track", help="recorded flight tracks").add_subparsers(dest="track_command", required=True)
    imported = track.add_parser("import", help="import a track (GPX, NMEA, IGC or CSV) for a draft sortie")
    imported.add_argument("sortie_id", type=int)
    imported.add_argument("file")
    imported.add_argument("--format", choices=("gpx", "nmea", "igc", "csv"), help="detected from the content if left out")
    imported.add_argument("--as", dest="as_email", help="who imports it (default: the sortie's instructor)")
    imported.set_defaults(run=cmd_track_import)
