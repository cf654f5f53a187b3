"""Pages: the progress file, and the list of files a person may open."""
from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from server.deps import DbSession
from server.logbook import access
from server.logbook import service as logbook
from server.people.deps import PageUser
from server.people.models import Person
from server.progress import file as progress_file
from server.progress import programs
from server.web import render

router = APIRouter(include_in_schema=False)

WAITING_SHOWN = 5  # the newest records waiting for the pilot's acknowledgement; the rest a link away


@router.get("/progress", name="progress_index")
def progress_index(request: Request, db: DbSession, person: PageUser):
    """A student goes straight to their own file; instructors and chief pilots pick a pilot."""
    pilots = [p for p in access.visible_people(db, viewer=person)
              if p.active and access.can_view_pilot(db, viewer=person, pilot_id=p.id)]
    if len(pilots) <= 1:
        return RedirectResponse(request.url_for("progress_file", pilot_id=person.id), status_code=303)
    return render(request, "progress/progress_index.html", {"person": person, "pilots": pilots})


def file_context(db, person: Person, pilot_id: int, kind: str | None = None, source: str = "all") -> dict:
    """What the progress file template needs, including which sign-offs the viewer may give."""
    built = progress_file.build(db, viewer=person, pilot_id=pilot_id, selected_key=kind,
                                source="measured" if source == "measured" else "all")
    enrolment = built.program.enrolment if built.program else None
    waiting = logbook.list_sorties(db, viewer=person, pilot_id=pilot_id, state="signed", limit=WAITING_SHOWN + 1)
    return {
        "person": person, "file": built,
        "waiting": waiting[:WAITING_SHOWN], "more_waiting": len(waiting) > WAITING_SHOWN,
        "can_acknowledge": person.id == pilot_id,
        "usual_instructor": db.get(Person, enrolment.instructor_id) if enrolment and enrolment.instructor_id else None,
        "can_confirm": person.has_role("instructor", "chief_pilot") and person.id != pilot_id,
        "can_check": enrolment is not None and programs.may_check(person, enrolment),
    }


@router.get("/people/{pilot_id}/progress", name="progress_file")
def progress_page(pilot_id: int, request: Request, db: DbSession, person: PageUser, kind: str | None = None,
                  source: str = "all"):
    """The progress file; with htmx and a kind, only that kind's charts; `source=measured` charts only the
    figures measured from recorded tracks."""
    return render(request, "progress/progress_file.html", file_context(db, person, pilot_id, kind, source),
                  fragment="progress/_charts.html")
