"""Setup pages for aircraft and sites: add, edit, take out of use (chief pilot, admin)."""
import re

from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from server.deps import DbSession
from server.errors import FlarebookError
from server.fleet import service as fleet
from server.fleet.schemas import AircraftCreate, SiteCreate
from server.forms import blank_to_none, plain, validate
from server.people.deps import SetupUser
from server.web import render

router = APIRouter(include_in_schema=False)

# The aim point fields appear once the site model and its API carry them.
AIM_FIELDS = tuple(name for name in ("aim_lat_deg", "aim_lon_deg") if name in SiteCreate.model_fields)
SITE_NAMES = ("name", "elevation_ft", "landing_dirs_deg", *AIM_FIELDS)


def _saved_or_again(request: Request, save, again, data, message, back: str):
    """Save valid data and go back to the list named `back`; otherwise show the form again with the reason."""
    if data is not None:
        try:
            save(data)
        except FlarebookError as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for(back), status_code=303)
    return again(message or "Some entries need a look: see the marked fields.")


def _in_use(request: Request, db, person, row, back: str):
    """Take the row out of use, or back into use, as the route's name says; then go back to the list."""
    active = request.scope["route"].name.endswith("_reactivate")
    fleet.set_active(db, row=row, active=active, actor=person)
    return RedirectResponse(request.url_for(back), status_code=303)


# ---- aircraft -----------------------------------------------------------------------------------

@router.get("/setup/aircraft", name="aircraft_list")
def aircraft_list(request: Request, db: DbSession, person: SetupUser):
    return render(request, "fleet/aircraft_list.html", {"person": person, "aircraft": fleet.list_aircraft(db),
                                                        "types": fleet.list_types(db)})


def _aircraft_form(request: Request, db, person, row, values: dict, errors: dict, message: str | None,
                   status: int = 200):
    return render(request, "fleet/aircraft_form.html", {
        "person": person, "row": row, "values": values, "errors": errors, "message": message,
        "types": [(t.id, t.designation) for t in fleet.list_types(db)],
    }, status_code=status)


@router.get("/setup/aircraft/new", name="aircraft_new")
def aircraft_new(request: Request, db: DbSession, person: SetupUser):
    return _aircraft_form(request, db, person, None, {}, {}, None)


async def _aircraft_submitted(request: Request):
    values = blank_to_none(await request.form(), ("registration", "type_id"))
    data, errors, message = validate(AircraftCreate, values)
    return values, data, errors, message


@router.post("/setup/aircraft/new", name="aircraft_create")
async def aircraft_create(request: Request, db: DbSession, person: SetupUser):
    values, data, errors, message = await _aircraft_submitted(request)
    return _saved_or_again(
        request, lambda d: fleet.create_aircraft(db, data=d, actor=person),
        lambda text: _aircraft_form(request, db, person, None, values, errors, text, status=422),
        data, message, "aircraft_list")


@router.get("/setup/aircraft/{aircraft_id}/edit", name="aircraft_edit")
def aircraft_edit(aircraft_id: int, request: Request, db: DbSession, person: SetupUser):
    row = fleet.get_aircraft(db, aircraft_id)
    return _aircraft_form(request, db, person, row, {"registration": row.registration, "type_id": row.type_id},
                          {}, None)


@router.post("/setup/aircraft/{aircraft_id}/edit", name="aircraft_update")
async def aircraft_update(aircraft_id: int, request: Request, db: DbSession, person: SetupUser):
    row = fleet.get_aircraft(db, aircraft_id)
    values, data, errors, message = await _aircraft_submitted(request)
    return _saved_or_again(
        request, lambda d: fleet.update_aircraft(db, row=row, data=d, actor=person),
        lambda text: _aircraft_form(request, db, person, row, values, errors, text, status=422),
        data, message, "aircraft_list")


@router.post("/setup/aircraft/{aircraft_id}/deactivate", name="aircraft_deactivate")
@router.post("/setup/aircraft/{aircraft_id}/reactivate", name="aircraft_reactivate")
def aircraft_in_use(aircraft_id: int, request: Request, db: DbSession, person: SetupUser):
    """Out of use, new sorties no longer offer it; every record flown in it stays."""
    return _in_use(request, db, person, fleet.get_aircraft(db, aircraft_id), "aircraft_list")


# ---- sites --------------------------------------------------------------------------------------

class DirectionsError(ValueError):
    pass


def parse_directions(text: str | None) -> list[float]:
    """Landing directions typed as degrees, e.g. "90, 270" or "090 270"."""
    if not text:
        return []
    parts = [p for p in re.split(r"[,;\s]+", text.strip()) if p]
    try:
        return [float(p) for p in parts]
    except ValueError:
        raise DirectionsError("Write landing directions as degrees, separated by commas, e.g. 90, 270.") from None


def format_directions(directions) -> str:
    return ", ".join(f"{plain(d):03}" if isinstance(plain(d), int) else str(d) for d in directions or [])


@router.get("/setup/sites", name="site_list")
def site_list(request: Request, db: DbSession, person: SetupUser):
    return render(request, "fleet/site_list.html", {
        "person": person, "sites": fleet.list_sites(db), "aim_fields": AIM_FIELDS,
        "directions": format_directions,
    })


def _site_form(request: Request, person, row, values: dict, errors: dict, message: str | None, status: int = 200):
    return render(request, "fleet/site_form.html", {
        "person": person, "row": row, "values": values, "errors": errors, "message": message,
        "aim_fields": AIM_FIELDS,
    }, status_code=status)


@router.get("/setup/sites/new", name="site_new")
def site_new(request: Request, person: SetupUser):
    return _site_form(request, person, None, {}, {}, None)


async def _site_submitted(request: Request):
    shown = blank_to_none(await request.form(), SITE_NAMES)
    values, errors = dict(shown), {}
    try:
        values["landing_dirs_deg"] = parse_directions(shown["landing_dirs_deg"])
    except DirectionsError as error:
        errors["landing_dirs_deg"] = str(error)
        values["landing_dirs_deg"] = []
    data, field_errors, message = validate(SiteCreate, values)
    errors = field_errors | errors
    return shown, (None if errors else data), errors, message


@router.post("/setup/sites/new", name="site_create")
async def site_create(request: Request, db: DbSession, person: SetupUser):
    shown, data, errors, message = await _site_submitted(request)
    return _saved_or_again(
        request, lambda d: fleet.create_site(db, data=d, actor=person),
        lambda text: _site_form(request, person, None, shown, errors, text, status=422),
        data, message, "site_list")


@router.get("/setup/sites/{site_id}/edit", name="site_edit")
def site_edit(site_id: int, request: Request, db: DbSession, person: SetupUser):
    row = fleet.get_site(db, site_id)
    values = {name: plain(getattr(row, name, None)) for name in SITE_NAMES}
    values["landing_dirs_deg"] = format_directions(row.landing_dirs_deg)
    return _site_form(request, person, row, values, {}, None)


@router.post("/setup/sites/{site_id}/edit", name="site_update")
async def site_update(site_id: int, request: Request, db: DbSession, person: SetupUser):
    row = fleet.get_site(db, site_id)
    shown, data, errors, message = await _site_submitted(request)
    return _saved_or_again(
        request, lambda d: fleet.update_site(db, row=row, data=d, actor=person),
        lambda text: _site_form(request, person, row, shown, errors, text, status=422),
        data, message, "site_list")


@router.post("/setup/sites/{site_id}/deactivate", name="site_deactivate")
@router.post("/setup/sites/{site_id}/reactivate", name="site_reactivate")
def site_in_use(site_id: int, request: Request, db: DbSession, person: SetupUser):
    """Out of use, new sorties no longer offer it; every record flown there stays."""
    return _in_use(request, db, person, fleet.get_site(db, site_id), "site_list")
