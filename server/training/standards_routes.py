"""Setup pages for standards: the list, a new standard, and edits that supersede."""
from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from server.compute.scoring import METRICS
from server.deps import DbSession
from server.errors import FlarebookError
from server.forms import blank_to_none, plain, validate
from server.people.deps import SetupUser
from server.training import standards
from server.training.models import Standard
from server.training.standards_schemas import StandardCreate
from server.web import render

router = APIRouter(include_in_schema=False)

FIELD_NAMES = tuple(name for name in StandardCreate.model_fields if name != "weights")
METRIC_LABELS = {
    "touchdown_speed": "Touchdown speed", "flare_height": "Flare height", "rotor_rpm": "Rotor RPM",
    "airspeed": "Descent airspeed", "touchdown_point": "Touchdown point", "heading": "Heading",
}


@router.get("/setup/standards", name="standard_list")
def standard_list(request: Request, db: DbSession, person: SetupUser):
    rows = standards.list_standards(db, include_retired=True)
    return render(request, "training/standards.html", {
        "person": person, "current": [s for s in rows if s.active], "retired": [s for s in rows if not s.active],
        "defaults": standards.defaults(), "metrics": METRICS, "metric_labels": METRIC_LABELS,
        "weights_of": lambda s: standards.as_data(s)["weights"],
    })


def _parse(form) -> tuple[StandardCreate | None, dict, dict, str | None]:
    """The form as a StandardCreate, or what to show again with the errors."""
    values = blank_to_none(form, FIELD_NAMES)
    weights = blank_to_none(form, [f"weight_{m}" for m in METRICS])
    shown = values | weights
    # A blank weight keeps that metric's default; 0 leaves the metric out of the score.
    values["weights"] = {m: weights[f"weight_{m}"] for m in METRICS if weights[f"weight_{m}"] is not None}
    data, errors, message = validate(StandardCreate, values)
    if "weights" in errors:
        message = "Weights are numbers of 0 or more: " + errors.pop("weights")
    if data is None and not message:
        message = "Some entries need a look: see the marked fields."
    return data, shown, errors, message


def _form_values(row: Standard | None) -> dict:
    data = standards.as_data(row) if row else standards.defaults() | {"name": "", "level": "private"}
    values = {name: plain(data[name]) for name in FIELD_NAMES}
    return values | {f"weight_{m}": plain(data["weights"][m]) for m in METRICS}


def _form_page(request, db, person, row, values, errors, message, status=200):
    return render(request, "training/standards_form.html", {
        "person": person, "row": row, "values": values, "errors": errors, "message": message,
        "metrics": METRICS, "metric_labels": METRIC_LABELS, "levels": standards.known_levels(db),
    }, status_code=status)


@router.get("/setup/standards/new", name="standard_new")
def standard_new(request: Request, db: DbSession, person: SetupUser):
    return _form_page(request, db, person, None, _form_values(None), {}, None)


@router.post("/setup/standards/new", name="standard_create")
async def standard_create(request: Request, db: DbSession, person: SetupUser):
    data, shown, errors, message = _parse(await request.form())
    if data is not None:
        try:
            standards.create_standard(db, data=data, actor=person)
        except FlarebookError as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for("standard_list"), status_code=303)
    return _form_page(request, db, person, None, shown, errors, message, status=422)


@router.get("/setup/standards/{standard_id}/edit", name="standard_edit")
def standard_edit(standard_id: int, request: Request, db: DbSession, person: SetupUser):
    row = standards.get_standard(db, standard_id=standard_id)
    return _form_page(request, db, person, row, _form_values(row), {}, None)


@router.post("/setup/standards/{standard_id}/edit", name="standard_update")
async def standard_update(standard_id: int, request: Request, db: DbSession, person: SetupUser):
    """Save an edit as a new version; attempts scored with the old one keep it."""
    row = standards.get_standard(db, standard_id=standard_id)
    data, shown, errors, message = _parse(await request.form())
    if data is not None:
        try:
            standards.supersede_standard(db, row=row, data=data, actor=person)
        except FlarebookError as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for("standard_list"), status_code=303)
    return _form_page(request, db, person, row, shown, errors, message, status=422)
