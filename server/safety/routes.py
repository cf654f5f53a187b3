"""Pages: the safety digest, the attempts behind each count, and its CSV export (chief pilots)."""
from datetime import date

from fastapi import APIRouter, Query, Request
from fastapi.responses import Response

from server.deps import DbSession
from server.people.deps import PageUser, require_role
from server.safety import service as safety
from server.safety.schemas import Dimension, FlagCode
from server.web import render

router = APIRouter(include_in_schema=False)


def _labels() -> dict:
    return {"flag_labels": safety.FLAG_LABELS, "flag_codes": safety.FLAG_CODES,
            "dimension_labels": safety.DIMENSION_LABELS}


@router.get("/safety", name="safety_digest")
def digest_page(request: Request, db: DbSession, person: PageUser, date_from: date | None = None,
                date_to: date | None = None):
    """The digest; the date filter asks htmx for the tables alone."""
    require_role(person, "chief_pilot")
    result = safety.digest(db, date_from=date_from, date_to=date_to)
    return render(request, "safety/digest.html", {"person": person, "digest": result, **_labels()},
                  fragment="safety/_digest.html")


@router.get("/safety/attempts", name="safety_attempts")
def attempts_page(request: Request, db: DbSession, person: PageUser, by: Dimension | None = None,
                  key: str | None = Query(default=None, max_length=20), flag: FlagCode | None = None,
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
