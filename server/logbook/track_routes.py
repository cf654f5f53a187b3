"""Sortie sheet: import a recorded track from the browser, and accept what it found."""
from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from server.deps import DbSession
from server.errors import Invalid
from server.logbook import service as logbook
from server.logbook import tracks
from server.logbook.routes import _sheet_context
from server.people.deps import PageUser
from server.web import render

router = APIRouter(include_in_schema=False)


def _refused(request: Request, db, person, sortie, message: str):
    """The sheet again with the reason beside the import form; nothing was stored."""
    db.rollback()
    context = _sheet_context(db, person, sortie)
    context["track_message"] = message
    return render(request, "logbook/sortie_sheet.html", context, status_code=422)


@router.post("/sorties/{sortie_id}/tracks", name="track_import")
async def track_import(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    limit = request.app.state.settings.track_upload_max_bytes
    async with request.form() as form:  # closes the spooled upload when done
        upload = form.get("file")
        if upload is None or isinstance(upload, str) or not upload.filename:
            return _refused(request, db, person, sortie, "Choose the track file to import.")
        data = await upload.read(limit + 1)
        filename, chosen_format = upload.filename, str(form.get("format") or "") or None
    try:
        track = tracks.import_track(db, actor=person, sortie=sortie, data=data, filename=filename,
                                    format=chosen_format, max_bytes=limit)
    except Invalid as error:
        return _refused(request, db, person, sortie, error.message)
    url = request.url_for("sortie_sheet", sortie_id=sortie.id)
    return RedirectResponse(f"{url}#track-{track.id}", status_code=303)


@router.post("/tracks/{track_id}/detections/{index}/accept", name="detection_accept")
async def detection_accept(track_id: int, index: int, request: Request, db: DbSession, person: PageUser):
    track = tracks.get_track(db, track_id=track_id, viewer=person)
    sortie = logbook.get_sortie(db, sortie_id=track.sortie_id, viewer=person)
    form = await request.form()
    target = str(form.get("target") or "new")
    try:
        attempt = tracks.accept_detection(
            db, actor=person, track=track, index=index,
            attempt_id=int(target) if target.isdigit() else None,
            maneuver=str(form.get("maneuver") or "") or None if not target.isdigit() else None,
            termination=str(form.get("termination") or "") or None)
    except Invalid as error:
        return _refused(request, db, person, sortie, f"Autorotation {index} of the track: {error.message}")
    url = request.url_for("sortie_sheet", sortie_id=sortie.id)
    return RedirectResponse(f"{url}#attempt-{attempt.id}", status_code=303)
