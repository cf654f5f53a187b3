"""The helicopter type's page: its figures and its height-velocity chart with a chosen sortie's entry points.

Served by logbook because the sorties it lists are logbook's (the chart itself is fleet's).
"""
from zoneinfo import ZoneInfo

from fastapi import APIRouter, Request
from markupsafe import Markup

from server.deps import DbSession
from server.errors import NotFound
from server.fleet import service as fleet
from server.fleet.hvchart import hv_chart_svg, summary
from server.logbook import service as logbook
from server.people import service as people
from server.people.deps import SetupUser
from server.web import render

router = APIRouter(include_in_schema=False)
SORTIE_CHOICES = 100


def _sortie_label(sortie, zone: ZoneInfo) -> str:
    when = sortie.flown_at.astimezone(zone).strftime("%d %b %Y %H:%M")
    count = len(sortie.attempts)
    return f"{when} · {sortie.pilot.name} · {sortie.aircraft.registration} · {count} attempt{'' if count == 1 else 's'}"


def _has_entry_points(sortie) -> bool:
    return any(a.entry_kias is not None and a.entry_height_ft is not None for a in sortie.attempts)


@router.get("/setup/types/{type_id}", name="type_page")
def type_page(type_id: int, request: Request, db: DbSession, person: SetupUser, sortie_id: int | None = None):
    """The type's figures and its height-velocity chart with a chosen sortie's entry points."""
    row = fleet.get_type(db, type_id)
    sorties = logbook.list_sorties(db, viewer=person, type_id=row.id, limit=SORTIE_CHOICES)
    # By default the newest sortie that has something to plot: an attempt with its entry point.
    chosen = next((s for s in sorties if _has_entry_points(s)), None) if sortie_id is None else None
    if sortie_id is not None:
        chosen = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
        if chosen.aircraft.type_id != row.id:
            raise NotFound(f"That sortie was not flown in a {row.designation}.")
    if chosen is not None and chosen not in sorties:
        sorties.insert(0, chosen)
    entries = fleet.hv_entries(helicopter=row, attempts=chosen.attempts) if chosen else []
    polygons = [[tuple(p) for p in polygon] for polygon in row.hv_avoid or []]
    zone = people.school_zone(db)
    return render(request, "fleet/type_page.html", {
        "person": person, "row": row, "chosen": chosen, "entries": entries,
        "sortie_choices": [(s.id, _sortie_label(s, zone)) for s in sorties],
        "chosen_label": _sortie_label(chosen, zone) if chosen else None,
        # ElementTree escapes every text and attribute it writes, so the SVG is safe to insert as is.
        "chart": Markup(hv_chart_svg(designation=row.designation, polygons=polygons, entries=entries)),  # nosec B704
        "summary": summary(row.designation, polygons, entries),
    }, fragment="fleet/_hv_chart.html")
