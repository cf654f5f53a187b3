"""Pages and htmx fragments of the sortie sheet."""
import uuid
from datetime import date, datetime
from zoneinfo import ZoneInfo

from fastapi import APIRouter, Query, Request
from fastapi.responses import FileResponse, HTMLResponse, RedirectResponse

from server.compute import plausibility
from server.compute.atmosphere import hpa_to_inhg
from server.config import PROJECT_ROOT
from server.deps import DbSession
from server.errors import Forbidden, Invalid
from server.fleet import service as fleet
from server.fleet.models import Aircraft, Site
from server.forms import blank_to_none, plain, validate
from server.logbook import access, derive, wording
from server.logbook import service as logbook
from server.logbook.models import MEANINGS, Attempt, Sortie
from server.logbook.page_once import PageOnce
from server.logbook.schemas import KG_PER_LB, AttemptFields, ConditionsRequest, SortieCreate, SortieUpdate
from server.logbook.track_views import sheet_tracks
from server.people import service as people
from server.people.deps import PageUser, require_role
from server.people.models import Person
from server.web import is_htmx, render, templates

templates.env.globals.update(
    verdict_reason=wording.verdict_reason, wind_words=wording.wind_words, FLAG_SHORT=wording.FLAG_SHORT,
    END_SPEED_NAMES=wording.END_SPEED_NAMES,
)

router = APIRouter(include_in_schema=False)

CONDITION_NAMES = ("oat_c", "altimeter", "altimeter_unit", "wind_dir_deg", "wind_kt", "gust_kt",
                   "takeoff_weight_lb", "metar", "remarks")
ATTEMPT_NAMES = tuple(AttemptFields.model_fields)
# A new attempt starts from the previous one's kind and these figures, marked as carried over.
CARRIED_NAMES = ("landing_dir_deg", "entry_height_ft", "entry_kias")


def new_form_key() -> str:
    """The Idempotency-Key of a create form, made when the form is drawn."""
    return str(uuid.uuid4())


def confirmed(form) -> bool:
    return form.get("confirm_unusual") in ("1", "on", "true")


def _weight_warnings(db, values) -> list[str]:
    aircraft = db.get(Aircraft, values.aircraft_id) if values.aircraft_id else None
    weight = values.takeoff_weight_lb
    if weight is None and values.takeoff_weight_kg is not None:
        weight = values.takeoff_weight_kg / KG_PER_LB
    return plausibility.weight_warnings(weight_lb=weight,
                                        reference_weight_lb=aircraft.type.reference_weight_lb if aircraft else None)


def _timezone(db) -> ZoneInfo:
    return people.school_zone(db)


def _sortie_values(form) -> dict:
    """Form fields to SortieCreate fields; the altimeter's unit picks the field name."""
    values = blank_to_none(form, ("pilot_id", "aircraft_id", "site_id", "flown_at") + CONDITION_NAMES)
    altimeter, unit = values.pop("altimeter"), values.pop("altimeter_unit") or "hPa"
    values["altimeter_inhg" if unit == "inHg" else "altimeter_hpa"] = altimeter
    values["remarks"] = values["remarks"] or ""
    return values


def _form_choices(db, person: Person) -> dict:
    pilots = [p for p in access.visible_people(db, viewer=person) if p.active]
    return {
        "pilots": [(p.id, p.name) for p in pilots],
        "aircraft": [(a.id, f"{a.registration} · {a.type.designation}") for a in fleet.list_aircraft(db) if a.active],
        "sites": [(s.id, f"{s.name} ({s.elevation_ft:,.0f} ft)") for s in fleet.list_sites(db) if s.active],
        "timezone": people.school(db).timezone,
    }


SORTIES_PER_PAGE = 50
SORTIE_STATE_LABELS = {"draft": "Draft", "signed": "Signed, waiting for the pilot", "acknowledged": "Acknowledged"}


def _chosen_id(value: str | None, what: str) -> int | None:
    """A choice from a filter's list; empty means any."""
    if value is None or value.strip() == "":
        return None
    if not value.strip().isdigit():
        raise Invalid(f"Choose the {what} from the list.")
    return int(value)


def _chosen_date(value: str | None, what: str):
    if value is None or value.strip() == "":
        return None
    try:
        return date.fromisoformat(value.strip())
    except ValueError:
        raise Invalid(f"Write the {what} date as YYYY-MM-DD.") from None


@router.get("/sw.js", name="service_worker")
def service_worker():
    """The offline worker, served from the root so that its scope covers the sortie sheets."""
    return FileResponse(PROJECT_ROOT / "static" / "sw.js", media_type="text/javascript",
                        headers={"Cache-Control": "no-cache", "Service-Worker-Allowed": "/"})


@router.get("/sorties", name="sortie_list")
def sortie_list(request: Request, db: DbSession, person: PageUser, offset: int = Query(default=0, ge=0),
                pilot_id: str | None = Query(default=None, max_length=12),
                instructor_id: str | None = Query(default=None, max_length=12),
                aircraft_id: str | None = Query(default=None, max_length=12),
                state: str | None = Query(default=None, max_length=20),
                date_from: str | None = Query(default=None, max_length=10),
                date_to: str | None = Query(default=None, max_length=10)):
    """Sorties newest first, filtered by what the address says, a page at a time both ways."""
    filters = {
        "pilot_id": _chosen_id(pilot_id, "pilot"), "instructor_id": _chosen_id(instructor_id, "instructor"),
        "aircraft_id": _chosen_id(aircraft_id, "aircraft"), "state": (state or "").strip() or None,
        "flown_from": _chosen_date(date_from, "first"), "flown_to": _chosen_date(date_to, "last"),
    }
    if filters["flown_from"] and filters["flown_to"] and filters["flown_from"] > filters["flown_to"]:
        raise Invalid("The first date must not be after the last date.")
    found = logbook.list_sorties(db, viewer=person, limit=SORTIES_PER_PAGE + 1, offset=offset, **filters)
    sorties = found[:SORTIES_PER_PAGE]
    kept = {key: value for key, value in {
        "pilot_id": filters["pilot_id"], "instructor_id": filters["instructor_id"],
        "aircraft_id": filters["aircraft_id"], "state": filters["state"],
        "date_from": filters["flown_from"] and filters["flown_from"].isoformat(),
        "date_to": filters["flown_to"] and filters["flown_to"].isoformat()}.items() if value is not None}
    pilots = access.visible_people(db, viewer=person)
    here = request.url_for("sortie_list")
    return render(request, "logbook/sortie_list.html", {
        "person": person, "sorties": sorties, "limit": SORTIES_PER_PAGE, "offset": offset, "kept": kept,
        "newer_url": here.include_query_params(**kept, offset=max(0, offset - SORTIES_PER_PAGE)) if offset else None,
        "older_url": (here.include_query_params(**kept, offset=offset + SORTIES_PER_PAGE)
                      if len(found) > SORTIES_PER_PAGE else None),
        "states": {s.id: logbook.display_state(db, s) for s in sorties},
        "pilot_choices": [(p.id, p.name) for p in pilots],
        "instructor_choices": [(p.id, p.name) for p in pilots if p.has_role("instructor")],
        "aircraft_choices": [(a.id, a.registration) for a in fleet.list_aircraft(db)],
        "state_choices": list(SORTIE_STATE_LABELS.items()),
    })


@router.get("/sorties/new", name="sortie_new")
def sortie_new(request: Request, db: DbSession, person: PageUser):
    require_role(person, "instructor", "chief_pilot")  # the only people who may start one
    now = datetime.now(_timezone(db)).strftime("%Y-%m-%dT%H:%M")
    return render(request, "logbook/sortie_new.html", {
        "person": person, "values": {"flown_at": now, "altimeter_unit": "hPa"}, "errors": {},
        "readout": None, "form_key": new_form_key(), **_form_choices(db, person),
    })


@router.post("/sorties/new", name="sortie_create")
async def sortie_create(request: Request, db: DbSession, person: PageUser):
    """Start a sortie; the form's key makes a double tap or a resend start it once."""
    form = await request.form()
    values = _local_flown_at(db, _sortie_values(form))
    data, errors, message = validate(SortieCreate, values)
    warnings = []
    if data is not None:
        warnings = [] if confirmed(form) else _weight_warnings(db, data)
    if data is not None and not warnings:
        once = PageOnce(db, person, request, form)
        made = once.claim()
        if made is not None:
            return RedirectResponse(request.url_for("sortie_sheet", sortie_id=made["sortie_id"]), status_code=303)
        try:
            sortie = logbook.create_sortie(db, actor=person, data=data)
        except Invalid as error:
            once.forget()
            message = error.message
        else:
            once.remember({"sortie_id": sortie.id})
            return RedirectResponse(request.url_for("sortie_sheet", sortie_id=sortie.id), status_code=303)
    errors = _rename_altimeter(errors)
    shown = blank_to_none(form, ("pilot_id", "aircraft_id", "site_id", "flown_at") + CONDITION_NAMES)
    return render(request, "logbook/sortie_new.html", {
        "person": person, "values": shown, "errors": errors, "message": message or _summary(errors),
        "readout": None, "warnings": warnings, "form_key": form.get("idempotency_key") or new_form_key(),
        **_form_choices(db, person),
    }, status_code=422)


def _local_flown_at(db, values: dict) -> dict:
    """The form's local date and time, in the school's time zone."""
    if values.get("flown_at"):
        try:
            typed = datetime.fromisoformat(values["flown_at"])
            # A time typed with an offset keeps it; a bare local time is the school's.
            values["flown_at"] = typed if typed.tzinfo else typed.replace(tzinfo=_timezone(db))
        except ValueError:
            values["flown_at"] = "not a date"
    return values


def _rename_altimeter(errors: dict) -> dict:
    for name in ("altimeter_hpa", "altimeter_inhg"):
        if name in errors:
            errors["altimeter"] = errors.pop(name)
    return errors


def _summary(errors: dict) -> str | None:
    return "Some entries need a look: see the marked fields." if errors else None


def _filled_from_metar(readout, values: dict) -> dict:
    """What a pasted METAR fills, as the fields show it; the page fills only fields not typed in since."""
    filled = {k: plain(getattr(readout, k)) for k in ("oat_c", "wind_dir_deg", "wind_kt", "gust_kt")
              if k in readout.filled_from_metar}
    if "altimeter_hpa" in readout.filled_from_metar:
        filled["altimeter"] = plain(round(readout.altimeter_hpa, 1))
        filled["altimeter_unit"] = "hPa"
    return filled


@router.post("/sorties/conditions", name="conditions_preview")
async def conditions_preview(request: Request, db: DbSession, person: PageUser):
    """Pressure and density altitude as the conditions are typed; a pasted METAR fills the fields."""
    form = await request.form()
    values = _sortie_values(form)
    site_id = values.get("site_id")
    elevation = None
    if site_id and str(site_id).isdigit():
        site = db.get(Site, int(site_id))
        elevation = site.elevation_ft if site else None
    request_values = {k: values.get(k) for k in ("oat_c", "altimeter_hpa", "altimeter_inhg", "wind_dir_deg",
                                                  "wind_kt", "gust_kt", "metar")}
    request_values["elevation_ft"] = elevation
    data, errors, message = validate(ConditionsRequest, request_values)
    readout = derive.conditions(data) if data is not None else None
    context = {"readout": readout, "errors": _rename_altimeter(errors), "fill": None}
    if readout is None:
        context["readout"] = {"message": message or "These conditions need a look:", "filled_from_metar": []}
    elif readout.filled_from_metar:  # the page fills only the fields not typed in since the METAR
        context["fill"] = _filled_from_metar(readout, values)
    return render(request, "logbook/_conditions_readout.html", context)


def _sheet_context(db, person: Person, sortie: Sortie) -> dict:
    newer = logbook.superseded_by(db, sortie)
    is_editor = logbook.may_edit_sortie(person=person, sortie=sortie)
    editable = sortie.state == "draft" and newer is None and is_editor
    versions = logbook.versions(db, sortie)
    version_signatures = {}
    for v in versions:
        version_signatures[v.id] = [
            {"signer_name": db.get(Person, s.signer_id).name, "signed_at": s.signed_at, "statement": s.statement,
             "content_sha256": s.content_sha256}
            for s in logbook.signatures(db, v)
        ]
    state = logbook.display_state(db, sortie)
    last = sortie.attempts[-1] if sortie.attempts else None
    return {
        "person": person, "sortie": sortie, "newer": newer, "editable": editable,
        "is_instructor": sortie.instructor_id == person.id, "states": {sortie.id: state},
        "local_time": sortie.flown_at.astimezone(_timezone(db)), "timezone": people.school(db).timezone,
        "versions": versions, "version_signatures": version_signatures,
        "sign_statement": MEANINGS["instructor_certifies"],
        "can_amend": state in ("signed", "acknowledged") and is_editor,
        "can_acknowledge": state == "signed" and sortie.pilot_id == person.id,
        "tracks": sheet_tracks(db, sortie=sortie),
        **_new_attempt_context(sortie, last),
    }


def _new_attempt_context(sortie: Sortie, previous: Attempt | None) -> dict:
    """A new attempt starts from the previous one's maneuver, termination and direction."""
    values, carried = {}, {}
    if previous is not None:
        values = {"maneuver": previous.maneuver, "termination": previous.termination}
        for name in CARRIED_NAMES:
            if getattr(previous, name) is not None:
                values[name], carried[name] = plain(getattr(previous, name)), previous.sequence
    return {"values": values, "carried": carried, "errors": {}, "landing_dirs": sortie.site.landing_dirs_deg or [],
            "next_sequence": max((a.sequence for a in sortie.attempts), default=0) + 1, "form_key": new_form_key()}


@router.get("/sorties/{sortie_id}", name="sortie_sheet")
def sortie_sheet(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    return render(request, "logbook/sortie_sheet.html", _sheet_context(db, person, sortie))


def _attempt_values(form) -> dict:
    values = blank_to_none(form, [n for n in ATTEMPT_NAMES if n != "takeover"])
    values["takeover"] = form.get("takeover") in ("1", "on", "true")
    values["remarks"] = values["remarks"] or ""
    return values


def _form_error(request, sortie: Sortie, values: dict, errors: dict, message: str | None,
                attempt: Attempt | None = None, *, warnings: list[str] = (), form_key: str | None = None):
    """Send the form back in place with the errors marked; nothing was saved."""
    context = {"sortie": sortie, "values": values, "errors": errors,
               "form_message": message or _summary(errors), "warnings": list(warnings),
               "landing_dirs": sortie.site.landing_dirs_deg or [], "form_key": form_key or new_form_key(),
               "next_sequence": max((a.sequence for a in sortie.attempts), default=0) + 1}
    target = "#attempt-form"
    if attempt is not None:
        context |= {"attempt_id": attempt.id, "sequence": attempt.sequence}
        target = f"#attempt-{attempt.id}"
    response = render(request, "logbook/_attempt_form.html", context, status_code=422)
    response.headers["HX-Retarget"] = target
    response.headers["HX-Reswap"] = "outerHTML"
    return response


def _attempt_warnings(data: AttemptFields) -> list[str]:
    return plausibility.attempt_warnings(maneuver=data.maneuver, entry_height_ft=data.entry_height_ft,
                                         entry_kias=data.entry_kias, flare_height_ft=data.flare_height_ft)


def _fragment(html: str, **headers) -> HTMLResponse:
    return HTMLResponse(html, headers={"Vary": "HX-Request", "Cache-Control": "no-store", **headers})


@router.post("/sorties/{sortie_id}/attempts", name="attempt_add")
async def attempt_add(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    """Add an attempt: the new card goes to the list, and a fresh form starts from its values.

    The form's key makes a double tap, a resend or a replay from the tablet's outbox add it once; a
    repeat is answered with the card of the attempt made the first time, and swaps nothing.
    """
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    form = await request.form()
    once = PageOnce(db, person, request, form)
    values = _attempt_values(form)
    data, errors, message = validate(AttemptFields, values)
    if data is None:
        return _form_error(request, sortie, values, errors, message, form_key=form.get("idempotency_key"))
    warnings = [] if confirmed(form) else _attempt_warnings(data)
    if warnings:
        return _form_error(request, sortie, values, {}, None, warnings=warnings,
                           form_key=form.get("idempotency_key"))
    made = once.claim()
    if made is not None:
        first = db.get(Attempt, made["attempt_id"])
        card = render(request, "logbook/_attempt_card.html", {"a": first, "editable": True}).body.decode() if first else ""
        return _fragment(card, **{"HX-Reswap": "none", "X-Flarebook-Repeat": "1"})
    attempt = logbook.add_attempt(db, actor=person, sortie=sortie, data=data)
    once.remember({"attempt_id": attempt.id})
    card = render(request, "logbook/_attempt_card.html", {"a": attempt, "editable": True})
    form_html = render(request, "logbook/_attempt_form.html", {"sortie": sortie, "oob": True,
                                                              **_new_attempt_context(sortie, attempt)})
    return _fragment(card.body.decode() + form_html.body.decode())


@router.get("/attempts/{attempt_id}/edit", name="attempt_edit_form")
def attempt_edit_form(attempt_id: int, request: Request, db: DbSession, person: PageUser):
    attempt = logbook.get_attempt(db, attempt_id=attempt_id, viewer=person)
    values = {name: plain(getattr(attempt, name)) for name in ATTEMPT_NAMES}
    return render(request, "logbook/_attempt_form.html", {
        "sortie": attempt.sortie, "values": values, "errors": {}, "attempt_id": attempt.id,
        "sequence": attempt.sequence, "landing_dirs": attempt.sortie.site.landing_dirs_deg or [],
    })


@router.get("/attempts/{attempt_id}", name="attempt_card")
def attempt_card(attempt_id: int, request: Request, db: DbSession, person: PageUser):
    attempt = logbook.get_attempt(db, attempt_id=attempt_id, viewer=person)
    editable = attempt.sortie.state == "draft" and logbook.may_edit_sortie(person=person, sortie=attempt.sortie)
    return render(request, "logbook/_attempt_card.html", {"a": attempt, "editable": editable})


@router.post("/attempts/{attempt_id}", name="attempt_update")
async def attempt_update(attempt_id: int, request: Request, db: DbSession, person: PageUser):
    attempt = logbook.get_attempt(db, attempt_id=attempt_id, viewer=person)
    form = await request.form()
    values = _attempt_values(form)
    data, errors, message = validate(AttemptFields, values)
    if data is None:
        return _form_error(request, attempt.sortie, values, errors, message, attempt)
    warnings = [] if confirmed(form) else _attempt_warnings(data)
    if warnings:
        return _form_error(request, attempt.sortie, values, {}, None, attempt, warnings=warnings)
    logbook.update_attempt(db, actor=person, attempt=attempt, data=data)
    return render(request, "logbook/_attempt_card.html", {"a": attempt, "editable": True})


@router.post("/attempts/{attempt_id}/delete", name="attempt_delete")
def attempt_delete(attempt_id: int, request: Request, db: DbSession, person: PageUser):
    attempt = logbook.get_attempt(db, attempt_id=attempt_id, viewer=person)
    logbook.delete_attempt(db, actor=person, attempt=attempt)
    return HTMLResponse("", headers={"Vary": "HX-Request"})


@router.post("/sorties/{sortie_id}/sign", name="sortie_sign")
async def sortie_sign(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    """Sign with the password; a refusal is shown at the form, in place, and the address stays."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    form = await request.form()
    sheet_url = request.url_for("sortie_sheet", sortie_id=sortie.id)
    try:
        logbook.sign_sortie(db, actor=person, sortie=sortie, password=str(form.get("password", "")))
    except Invalid as refusal:
        context = _sheet_context(db, person, sortie)
        context["message"] = refusal.message
        template = "logbook/_sign.html" if is_htmx(request) else "logbook/sortie_sheet.html"
        return render(request, template, context, status_code=422)
    if is_htmx(request):
        return _fragment("", **{"HX-Redirect": str(sheet_url)})
    return RedirectResponse(sheet_url, status_code=303)


@router.get("/sorties/{sortie_id}/details", name="sortie_details_form")
def sortie_details_form(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    """The draft's own fields, to correct them in place."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    if not (sortie.state == "draft" and logbook.superseded_by(db, sortie) is None
            and logbook.may_edit_sortie(person=person, sortie=sortie)):
        raise Forbidden("Only a draft's instructor or a chief pilot can correct it; a signed sortie is amended instead.")
    local = sortie.flown_at.astimezone(_timezone(db)).strftime("%Y-%m-%dT%H:%M")
    values = {name: plain(getattr(sortie, name)) for name in
              ("pilot_id", "aircraft_id", "site_id", "oat_c", "wind_dir_deg", "wind_kt", "gust_kt",
               "takeoff_weight_lb", "metar", "remarks")}
    unit = sortie.altimeter_unit or "hPa"
    altimeter = sortie.altimeter_hpa
    if altimeter is not None and unit == "inHg":
        altimeter = round(hpa_to_inhg(altimeter), 2)
    values |= {"flown_at": local, "altimeter": plain(altimeter), "altimeter_unit": unit}
    return _details_form(request, db, person, sortie, values=values)


def _details_form(request, db, person, sortie, *, values, errors=None, message=None, warnings=(), status_code=200):
    return render(request, "logbook/_sortie_details_form.html", {
        "person": person, "sortie": sortie, "values": values, "errors": errors or {}, "message": message,
        "warnings": list(warnings), "readout": None, **_form_choices(db, person),
    }, status_code=status_code)


@router.post("/sorties/{sortie_id}/details", name="sortie_details_save")
async def sortie_details_save(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    """Save corrections to a draft: altitudes recomputed, every attempt rescored, the change audited."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    form = await request.form()
    values = _local_flown_at(db, _sortie_values(form))
    data, errors, message = validate(SortieUpdate, values)
    warnings = []
    if data is not None:
        checked = data.model_copy(update={"aircraft_id": data.aircraft_id or sortie.aircraft_id})
        warnings = [] if confirmed(form) else _weight_warnings(db, checked)
    if data is not None and not warnings:
        try:
            logbook.update_sortie(db, actor=person, sortie=sortie, data=data)
        except Invalid as error:
            db.rollback()
            message = error.message
        else:
            sheet_url = str(request.url_for("sortie_sheet", sortie_id=sortie.id))
            if is_htmx(request):
                return _fragment("", **{"HX-Redirect": sheet_url})
            return RedirectResponse(sheet_url, status_code=303)
        sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    shown = blank_to_none(form, ("pilot_id", "aircraft_id", "site_id", "flown_at") + CONDITION_NAMES)
    return _details_form(request, db, person, sortie, values=shown, errors=_rename_altimeter(errors),
                         message=message or _summary(errors), warnings=warnings, status_code=422)


@router.post("/sorties/{sortie_id}/discard", name="sortie_discard")
def sortie_discard(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    """Throw away a draft started by mistake (its instructor only; never a signed sortie)."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    logbook.discard_sortie(db, actor=person, sortie=sortie)
    return RedirectResponse(request.url_for("sortie_list"), status_code=303)


@router.post("/sorties/{sortie_id}/acknowledge", name="sortie_acknowledge")
async def sortie_acknowledge(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    """The pilot acknowledges; from the progress file's waiting list they go back there."""
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    logbook.acknowledge_sortie(db, actor=person, sortie=sortie)
    if (await request.form()).get("back") == "progress":
        return RedirectResponse(str(request.url_for("progress_file", pilot_id=sortie.pilot_id)) + "#waiting-h",
                                status_code=303)
    return RedirectResponse(request.url_for("sortie_sheet", sortie_id=sortie.id), status_code=303)


@router.post("/sorties/{sortie_id}/amend", name="sortie_amend")
async def sortie_amend(sortie_id: int, request: Request, db: DbSession, person: PageUser):
    sortie = logbook.get_sortie(db, sortie_id=sortie_id, viewer=person)
    form = await request.form()
    amendment = logbook.amend_sortie(db, actor=person, sortie=sortie, reason=str(form.get("reason", "")))
    return RedirectResponse(request.url_for("sortie_sheet", sortie_id=amendment.id), status_code=303)


@router.get("/")
def home(request: Request, db: DbSession, person: PageUser):
    """What each person needs first: recent sorties, and a button to start one for instructors."""
    sorties = logbook.list_sorties(db, viewer=person, limit=15)
    return render(request, "logbook/home.html", {
        "person": person, "sorties": sorties,
        "states": {s.id: logbook.display_state(db, s) for s in sorties},
    })
