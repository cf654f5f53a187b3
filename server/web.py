"""Templates and the helpers every HTML route uses."""
from fastapi import Request
from fastapi.templating import Jinja2Templates
from starlette.responses import HTMLResponse

from server.compute.atmosphere import hpa_to_inhg
from server.config import PROJECT_ROOT
from server.navigation import main_nav
from server.vocabulary import MANEUVER_LABELS, ROLE_LABELS, TERMINATION_LABELS

templates = Jinja2Templates(directory=str(PROJECT_ROOT / "templates"))

CAUTION = (
    "Computed figures are training aids that depend on the data entered. The aircraft flight manual, "
    "the operator's approved procedures, local rules and the judgement of a licensed instructor always "
    "come first."
)

STATE_LABELS = {
    "draft": "Draft", "signed": "Signed", "acknowledged": "Signed and acknowledged",
    "amended": "Amended (older version)",
}


def _fmt(value, digits: int = 0, unit: str = "", *, trim: bool = False) -> str:
    """A figure with thousands separators; `trim` drops trailing zeros (12.0 kt reads 12 kt)."""
    if value is None:
        return "—"
    text = f"{value:,.{digits}f}"
    if trim and "." in text:
        text = text.rstrip("0").rstrip(".")
    return f"{text} {unit}".strip()


def _labelled(keys, labels: dict) -> str:
    """Stored keys in words: ["chief_pilot", "instructor"] reads "Chief pilot, Instructor"."""
    return ", ".join(labels.get(key, key) for key in keys)


# Attempt fields that a recorded track can fill, by score part and by name (tracks/_measured_line.html).
MEASURED_PART_FIELDS = {"touchdown_speed": "touchdown_speed_kt", "flare_height": "flare_height_ft",
                        "touchdown_point": "point_error_ft"}
MEASURED_LABELS = {"entry_height_ft": "entry height", "flare_height_ft": "flare height",
                   "touchdown_speed_kt": "touchdown speed", "point_error_ft": "distance from the aim point"}

templates.env.filters["num"] = _fmt
templates.env.filters["labelled"] = _labelled
templates.env.filters["inhg"] = hpa_to_inhg  # pressure units convert in one place, not in templates
templates.env.globals.update(
    CAUTION=CAUTION, MANEUVER_LABELS=MANEUVER_LABELS, TERMINATION_LABELS=TERMINATION_LABELS,
    ROLE_LABELS=ROLE_LABELS, STATE_LABELS=STATE_LABELS, MEASURED_PART_FIELDS=MEASURED_PART_FIELDS,
    MEASURED_LABELS=MEASURED_LABELS, main_nav=main_nav,
)


def is_htmx(request: Request) -> bool:
    return request.headers.get("HX-Request") == "true"


def render(request: Request, template: str, context: dict | None = None, *, status_code: int = 200,
           fragment: str | None = None) -> HTMLResponse:
    """Render a page, or only its fragment when htmx asked; one URL, so say it varies."""
    context = dict(context or {})
    context.setdefault("csrf_token", getattr(request.state, "csrf_token", ""))
    name = fragment if fragment and is_htmx(request) else template
    response = templates.TemplateResponse(request, name, context, status_code=status_code)
    response.headers["Vary"] = "HX-Request"
    response.headers["Cache-Control"] = "no-store"
    return response
