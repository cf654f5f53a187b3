"""JSON API: import a recorded track for a sortie, read it, accept a detection into an attempt."""
from typing import Annotated

from fastapi import APIRouter, File, Form, Request, Response, UploadFile

from server.deps import DbSession
from server.errors import Invalid
from server.logbook import service as logbook
from server.logbook.api import attempt_read
from server.logbook.schemas import AttemptRead
from server.logbook import tracks
from server.logbook.models import Track
from server.logbook.track_schemas import AcceptRequest, TrackRead
from server.people.deps import ApiUser

router = APIRouter(tags=["tracks"])


def track_read(track: Track) -> TrackRead:
    return TrackRead.model_validate({
        **{name: getattr(track, name) for name in TrackRead.model_fields if name != "detections"},
        "detections": track.detections,
    })


async def read_upload(request: Request, file: UploadFile) -> bytes:
    """The uploaded bytes, refusing a file over the track upload limit without reading all of it."""
    limit = request.app.state.settings.track_upload_max_bytes
    data = await file.read(limit + 1)
    await file.close()
    if len(data) > limit:
        raise Invalid(f"The file is larger than {limit / 1e6:.0f} MB, the limit for a track; "
                      "export a shorter stretch or a lower sample rate.")
    return data


@router.post("/sorties/{sortie_id}/tracks", response_model=TrackRead, status_code=201,
             responses={200: {"model": TrackRead, "description": "this file was imported for the sortie already"}})
async def import_track(sortie_id: int, request: Request, response: Response, db: DbSession, person: ApiUser,
                       file: Annotated[UploadFile, File(description="GPX, NMEA 0183, IGC or CSV")],
                       format: Annotated[str | None, Form(description="gpx, nmea, igc or csv; detected if left out")] = None):
    """Import a recorded track: every practice autorotation in it is found and measured. The same file sent
    again gives the same track (200)."""
    data = await read_upload(request, file)
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    if tracks.already_imported(db, sortie=sortie, data=data) is not None:
        response.status_code = 200
    track = tracks.import_track(db, actor=person, sortie=sortie, data=data, filename=file.filename or "",
                                format=format, max_bytes=request.app.state.settings.track_upload_max_bytes)
    return track_read(track)


@router.get("/tracks/{track_id}", response_model=TrackRead)
def get_track(track_id: int, db: DbSession, person: ApiUser):
    return track_read(tracks.get_track(db, track_id=track_id, viewer=person))


@router.post("/tracks/{track_id}/detections/{index}/accept", response_model=AttemptRead)
def accept_detection(track_id: int, index: int, data: AcceptRequest, db: DbSession, person: ApiUser):
    """Fill an attempt with a detection's measured figures; they stay marked measured until retyped."""
    track = tracks.get_track(db, track_id=track_id, viewer=person)
    attempt = tracks.accept_detection(db, actor=person, track=track, index=index, attempt_id=data.attempt_id,
                                      maneuver=data.maneuver, termination=data.termination)
    return attempt_read(attempt)
