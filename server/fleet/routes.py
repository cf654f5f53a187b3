"""Setup pages for helicopter types, with the height-velocity chart of a chosen sortie."""
from zoneinfo import ZoneInfo

from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse
from markupsafe import Markup

from server.deps import DbSession, SetupUser
from server.errors import FlarebookError, NotFound
from server.fleet import service as fleet
from server.fleet.hv_text import RegionTextError, format_regions, parse_regions
from server.fleet.hvchart import hv_chart_svg, summary
from server.fleet.models import HelicopterType
from server.fleet.schemas import TypeCreate
from server.forms import blank_to_none, plain, validate
from server.logbook import service as logbook
from server.web import render

router = APIRouter(include_in_schema=False)

TYPE_NAMES = (
    "designation", "rotor_radius_ft", "blade_count", "rotor_inertia_slug_ft2", "normal_rotor_rpm",
    "nr_power_off_min_pct", "nr_power_off_max_pct", "autorotation_kias", "reference_weight_lb",
    "flare_band_low_ft", "flare_band_high_ft", "touchdown_speed_max_kt", "hv_avoid",
)
SORTIE_CHOICES = 100


@router.get("/setup", name="setup_home")
def setup_home(request: Request, person: SetupUser):
    """The Setup area: what a chief pilot or administrator configures."""
    return render(request, "fleet/setup.html", {"person": person})


@router.get("/setup/types", name="type_list")
def type_list(request: Request, db: DbSession, person: SetupUser):
    return render(request, "fleet/type_list.html", {"person": person, "types": fleet.list_types(db)})


def _form_values(row: HelicopterType | None) -> dict:
    """An edit form starts from the stored type; a new one starts empty."""
    if row is None:
        return {"blade_count": 2}
    values = {name: plain(getattr(row, name)) for name in TYPE_NAMES if name != "hv_avoid"}
    values["hv_avoid"] = format_regions(row.hv_avoid)
    return values


def _parse_form(form) -> tuple[TypeCreate | None, dict, dict, str | None]:
    """The submitted form as a TypeCreate, or the values to show again with errors per field."""
    values = blank_to_none(form, TYPE_NAMES)
    shown = dict(values)
    errors: dict[str, str] = {}
    low, high = values.pop("flare_band_low_ft"), values.pop("flare_band_high_ft")
    values["flare_band_ft"] = [low, high] if low is not None and high is not None else None
    try:
        values["hv_avoid"] = parse_regions(values["hv_avoid"])
    except RegionTextError as error:
        errors["hv_avoid"] = str(error)
        values["hv_avoid"] = []
    data, field_errors, message = validate(TypeCreate, values)
    band_error = field_errors.pop("flare_band_ft", None)
    if band_error:
        field_errors["flare_band_low_ft"] = "Give both ends of the flare band in ft AGL, low then high."
    errors = field_errors | errors
    if errors and data is not None:
        data = None
    if data is None and not message and errors:
        message = "Some entries need a look: see the marked fields."
    return data, shown, errors, message


def _form_page(request: Request, person, row, values: dict, errors: dict, message: str | None, status: int = 200):
    return render(request, "fleet/type_form.html", {
        "person": person, "row": row, "values": values, "errors": errors, "message": message,
    }, status_code=status)


@router.get("/setup/types/new", name="type_new")
def type_new(request: Request, person: SetupUser):
    return _form_page(request, person, None, _form_values(None), {}, None)


@router.post("/setup/types/new", name="type_create")
async def type_create(request: Request, db: DbSession, person: SetupUser):
    data, shown, errors, message = _parse_form(await request.form())
    if data is not None:
        try:
            row = fleet.create_type(db, data=data, actor_id=person.id)
        except FlarebookError as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for("type_page", type_id=row.id), status_code=303)
    return _form_page(request, person, None, shown, errors, message, status=422)


@router.get("/setup/types/{type_id}/edit", name="type_edit")
def type_edit(type_id: int, request: Request, db: DbSession, person: SetupUser):
    row = fleet.get_type(db, type_id)
    return _form_page(request, person, row, _form_values(row), {}, None)


@router.post("/setup/types/{type_id}/edit", name="type_update")
async def type_update(type_id: int, request: Request, db: DbSession, person: SetupUser):
    row = fleet.get_type(db, type_id)
    data, shown, errors, message = _parse_form(await request.form())
    if data is not None:
        try:
            fleet.update_type(db, row=row, data=data, actor_id=person.id)
        except FlarebookError as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for("type_page", type_id=row.id), status_code=303)
    return _form_page(request, person, row, shown, errors, message, status=422)


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
    zone = ZoneInfo(fleet.school(db).timezone)
    return render(request, "fleet/type_page.html", {
        "person": person, "row": row, "chosen": chosen, "entries": entries,
        "sortie_choices": [(s.id, _sortie_label(s, zone)) for s in sorties],
        "chosen_label": _sortie_label(chosen, zone) if chosen else None,
        # ElementTree escapes every text and attribute it writes, so the SVG is safe to insert as is.
        "chart": Markup(hv_chart_svg(designation=row.designation, polygons=polygons, entries=entries)),  # nosec B704
        "summary": summary(row.designation, polygons, entries),
    }, fragment="fleet/_hv_chart.html")
