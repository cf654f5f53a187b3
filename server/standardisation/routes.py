"""Pages: instructor standardisation and the attempts behind each figure (chief pilots, admins)."""
from datetime import date

from fastapi import APIRouter, Query, Request

from server.compute.standardisation import ENOUGH_GRADED
from server.deps import DbSession
from server.people.deps import PageUser, require_role
from server.standardisation import service
from server.standardisation.api import READERS
from server.standardisation.chart import ChartRow, standardisation_svg
from server.standardisation.schemas import ManeuverOrAny, Scope, Show, TerminationOrAny
from server.web import render

router = APIRouter(include_in_schema=False)

SHOW_LABELS = {"attempts": "All attempts", "graded": "Graded attempts", "agree": "Grade agrees with the figures",
               "lenient": "Graded satisfactory though outside a tolerance",
               "strict": "Graded unsatisfactory though inside every tolerance"}
SCOPE_LABELS = {"all": "", "shared": "on the kinds and levels shared with another instructor",
                "peers": "the other instructors, on the kinds and levels this instructor shares"}


def level_label(level: str) -> str:
    return "school's default tolerances" if level == service.NO_LEVEL else f"{level} level"


def _filters(result_from: date, result_to: date, maneuver: str | None, termination: str | None) -> dict:
    params = {"from": result_from.isoformat(), "to": result_to.isoformat()}
    if maneuver:
        params["maneuver"] = maneuver
    if termination:
        params["termination"] = termination
    return params


@router.get("/standardisation", name="standardisation")
def standardisation_page(request: Request, db: DbSession, person: PageUser,
                         date_from: date | None = Query(default=None, alias="from"),
                         date_to: date | None = Query(default=None, alias="to"),
                         maneuver: ManeuverOrAny = None, termination: TerminationOrAny = None):
    """The table and the chart; the filter asks htmx for the report alone."""
    require_role(person, *READERS)
    result = service.report(db, date_from=date_from, date_to=date_to, maneuver=maneuver or None,
                            termination=termination or None)
    filters = _filters(result.date_from, result.date_to, result.maneuver, result.termination)
    base = request.url_for("standardisation_attempts")

    def link(instructor_id: int | None, scope: str = "all"):
        def to(show: str) -> str:
            params = dict(filters, show=show)
            if instructor_id is not None:
                params["instructor_id"] = str(instructor_id)
            if scope != "all":
                params["scope"] = scope
            return str(base.include_query_params(**params))
        return to

    chart_rows = [ChartRow(label=f.name, figures=f.all, link=link(f.instructor_id)) for f in result.rows]
    chart_rows.append(ChartRow(label="Whole school", figures=result.school, link=link(None)))
    chart = standardisation_svg(chart_rows, school_mean=result.school.mean_score)
    return render(request, "standardisation/page.html", {
        "person": person, "report": result, "filters": filters, "chart": chart, "link": link,
        "min_graded": ENOUGH_GRADED, "level_label": level_label,
    }, fragment="standardisation/_report.html")


@router.get("/standardisation/attempts", name="standardisation_attempts")
def attempts_page(request: Request, db: DbSession, person: PageUser, instructor_id: int | None = None,
                  show: Show = "attempts", scope: Scope = "all",
                  date_from: date | None = Query(default=None, alias="from"),
                  date_to: date | None = Query(default=None, alias="to"),
                  maneuver: ManeuverOrAny = None, termination: TerminationOrAny = None):
    """The signed attempts one figure counts, each linking to its sortie sheet."""
    require_role(person, *READERS)
    items, truncated, (start, end) = service.attempts_behind(
        db, instructor_id=instructor_id, show=show, scope=scope, date_from=date_from, date_to=date_to,
        maneuver=maneuver or None, termination=termination or None)
    return render(request, "standardisation/attempts.html", {
        "person": person, "items": items, "truncated": truncated, "limit": service.MAX_LISTED,
        "show_label": SHOW_LABELS[show], "scope_label": SCOPE_LABELS[scope],
        "instructor": service.instructor_name(db, instructor_id), "date_from": start, "date_to": end,
        "filters": _filters(start, end, maneuver or None, termination or None), "outcome_of": service.outcome_of,
    })
