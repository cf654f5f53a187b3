"""Setup pages for helicopter types (the type page with its height-velocity chart is `server/logbook/type_page_routes.py`)."""
from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from server.deps import DbSession
from server.errors import FlarebookError
from server.fleet import service as fleet
from server.fleet.hv_text import RegionTextError, format_regions, parse_regions
from server.fleet.models import HelicopterType
from server.fleet.schemas import TypeCreate
from server.forms import blank_to_none, plain, validate
from server.people.deps import SetupUser
from server.web import render

router = APIRouter(include_in_schema=False)

TYPE_NAMES = (
    "designation", "rotor_radius_ft", "blade_count", "rotor_inertia_slug_ft2", "normal_rotor_rpm",
    "nr_power_off_min_pct", "nr_power_off_max_pct", "autorotation_kias", "reference_weight_lb",
    "flare_band_low_ft", "flare_band_high_ft", "touchdown_speed_max_kt", "hv_avoid",
)


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
            row = fleet.create_type(db, data=data, actor=person)
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
            fleet.update_type(db, row=row, data=data, actor=person)
        except FlarebookError as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for("type_page", type_id=row.id), status_code=303)
    return _form_page(request, person, row, shown, errors, message, status=422)
