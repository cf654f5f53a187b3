"""Pages: the safety digest, the attempts behind each count, and its CSV export (chief pilots)."""
from datetime import date, timedelta

from fastapi import APIRouter, Query, Request
from fastapi.responses import Response
from markupsafe import Markup

from server.deps import DbSession
from server.people.deps import PageUser, require_role
from server.safety import service as safety
from server.safety.chart import MonthBar, months_chart_svg
from server.safety.chart import describe as describe_months
from server.safety.schemas import Category, Dimension
from server.web import render

router = APIRouter(include_in_schema=False)


PERIODS = {"7d": "Last 7 days", "30d": "Last 30 days", "quarter": "This quarter", "12m": "Last 12 months"}
PAGE_PERIOD = "30d"  # a chief pilot's Monday morning: the last month, with the year's trend in the chart
CHART_MONTHS = 12


def _labels() -> dict:
    return {"flag_labels": safety.FLAG_LABELS | {safety.FLARE_BAND: safety.FLARE_BAND_LABEL},
            "flag_codes": safety.FLAG_CODES, "categories": safety.CATEGORIES, "flare_band": safety.FLARE_BAND,
            "dimension_labels": safety.DIMENSION_LABELS}


def _month_bars(request: Request, db, end: date) -> list[MonthBar]:
    bars = []
    for row in safety.months_to(db, end=end, months=CHART_MONTHS):
        year, month = (int(part) for part in row.key.split("-"))
        first = date(year, month, 1)
        last = min(date(year + (month == 12), month % 12 + 1, 1) - timedelta(days=1), end)
        flagged = row.counts.get(safety.ANY_FLAG, 0)
        href = str(request.url_for("safety_attempts").include_query_params(
            by="month", key=row.key, date_from=first.isoformat(), date_to=last.isoformat())) if flagged else None
        bars.append(MonthBar(label=first.strftime("%b %Y"), attempts=row.attempts, flagged=flagged, href=href))
    return bars


@router.get("/safety", name="safety_digest")
def digest_page(request: Request, db: DbSession, person: PageUser, date_from: date | None = None,
                date_to: date | None = None, period: str | None = Query(default=None, pattern="^(7d|30d|quarter|12m)$")):
    """The digest for a named period or chosen dates; the filter asks htmx for the digest alone."""
    require_role(person, "chief_pilot")
    if period is None and date_from is None and date_to is None:
        period = PAGE_PERIOD
    if period is not None:
        date_from, date_to = safety.preset_range(db, period)
    result = safety.digest(db, date_from=date_from, date_to=date_to)
    bars = _month_bars(request, db, result.date_to)
    return render(request, "safety/digest.html", {
        "person": person, "digest": result, "period": period, "periods": PERIODS, **_labels(),
        # The drawing escapes every text and attribute it writes, so it is safe to insert as is.
        "months_chart": Markup(months_chart_svg(bars)),  # nosec B704
        "months_summary": describe_months(bars), "chart_months": CHART_MONTHS,
    }, fragment="safety/_digest.html")


@router.get("/safety/attempts", name="safety_attempts")
def attempts_page(request: Request, db: DbSession, person: PageUser, by: Dimension | None = None,
                  key: str | None = Query(default=None, max_length=20), flag: Category | None = None,
                  date_from: date | None = None, date_to: date | None = None):
    """The flagged attempts behind one count, each linking to its sortie sheet."""
    require_role(person, "chief_pilot")
    items, truncated = safety.flagged_attempts(db, by=by, key=key, flag=flag, date_from=date_from, date_to=date_to)
    date_from, date_to = safety.date_range(db, date_from=date_from, date_to=date_to)
    group = None
    if by is not None and key is not None:
        group = safety.group_label(db, by, key)
    return render(request, "safety/attempts.html", {
        "person": person, "items": items, "truncated": truncated, "by": by, "key": key, "flag": flag,
        "group": group, "date_from": date_from, "date_to": date_to, "limit": safety.MAX_LISTED, **_labels(),
    })


@router.get("/safety/digest.csv", name="safety_digest_csv")
def digest_csv(db: DbSession, person: PageUser, date_from: date | None = None, date_to: date | None = None):
    """What the digest page shows, as CSV."""
    require_role(person, "chief_pilot")
    result = safety.digest(db, date_from=date_from, date_to=date_to)
    name = f"flarebook-safety-digest-{result.date_from.isoformat()}-{result.date_to.isoformat()}.csv"
    return Response(safety.digest_csv(result), media_type="text/csv; charset=utf-8",
                    headers={"Content-Disposition": f'attachment; filename="{name}"', "Cache-Control": "no-store"})
