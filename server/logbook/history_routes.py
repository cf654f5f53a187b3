"""The record history page."""
from fastapi import APIRouter, Request

from server.deps import DbSession
from server.logbook import service as logbook
from server.logbook.history import record_history
from server.people.deps import PageUser
from server.web import render

router = APIRouter(include_in_schema=False)


@router.get("/sorties/{sortie_id}/history", name="record_history")
def history_page(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    """Every version of a sortie record, each signature re-checked, and its audit entries in the chain."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    return render(request, "logbook/history.html", {"person": person, "sortie": sortie,
                                                     "history": record_history(db, sortie)})
