"""Pages: the readiness board and its CSV, currency rules, calendar links, a person's own currency."""
from datetime import date

from fastapi import APIRouter, Query, Request
from fastapi.responses import RedirectResponse, Response
from sqlalchemy import select

from server.compute.currency import format_date
from server.currency import board, board_cache, feeds
from server.currency import service as rules_service
from server.currency.models import CurrencyRule
from server.currency.schemas import RuleCreate
from server.deps import DbSession
from server.errors import Invalid, NotFound
from server.fleet.models import HelicopterType
from server.forms import validate
from server.logbook import access
from server.people import service as people
from server.people.deps import PageUser, SetupUser
from server.people.models import Person
from server.vocabulary import MANEUVER_LABELS, ROLES, ROLE_LABELS, TERMINATION_LABELS
from server.web import render

router = APIRouter(include_in_schema=False)

STATUS_CHOICES = tuple(board.STATUS_LABELS.items())


def _as_of(db, raw: str | None) -> tuple[date, str | None]:
    """The as-of date from the picker; a bad date falls back to today with a message."""
    if raw:
        try:
            return date.fromisoformat(raw), None
        except ValueError:
            return people.school_today(db), f"“{raw}” is not a date; showing today instead."
    return people.school_today(db), None


def _board_filters(role: str | None, rule_id: str | None, status: str | None) -> dict:
    """Unknown filter values are ignored rather than refused: a stale link still shows a board."""
    return {
        "role": role if role in ROLES else None,
        "rule_id": int(rule_id) if rule_id and rule_id.isdigit() else None,
        "status": status if status in board.STATUS_LABELS else None,
    }


def _board_grid(request: Request, db, day: date, filters: dict) -> tuple[list[CurrencyRule], board.Grid]:
    """The board's columns and lines; today's lines are kept while nothing on them changes (`board_cache`).

    Only plain values are kept (no ORM object outlives its session): the columns are read again."""
    if day != people.school_today(db):
        return board.board_grid(db, as_of=day, **filters)
    lines = board_cache.kept_for_today(request.app, db, ("grid", day, *sorted(filters.items())),
                                       lambda: board.grid(board.board(db, as_of=day, role=filters["role"],
                                                                      rule_id=filters["rule_id"]),
                                                          status=filters["status"]))
    return board.grid_columns(db, lines), lines


@router.get("/currency", name="readiness_board")
def readiness_board(request: Request, db: DbSession, person: SetupUser, as_of: str | None = None,
                    role: str | None = None, rule_id: str | None = None, status: str | None = None,
                    page: int = Query(default=1, ge=1), show: str | None = None):
    """One row per active pilot, one column per rule, soonest trouble first."""
    day, message = _as_of(db, as_of)
    filters = _board_filters(role, rule_id, status)
    columns, lines = _board_grid(request, db, day, filters)
    shown = board.board_page(lines, page=page, show_all=show == "all")
    query = {"as_of": day.isoformat(), **{k: v for k, v in filters.items() if v is not None}}
    return render(request, "currency/board.html", {
        "person": person, "lines": shown.rows, "total": shown.total, "counts": shown.counts, "as_of": day,
        "message": message, "as_of_words": format_date(day), "columns": columns,
        "rule_words": board.rule_texts(db, columns), "short_name": board.short_rule_name,
        "cell_words": board.cell_words,
        "filters": filters, "rules": rules_service.list_rules(db), "roles": ROLES, "statuses": STATUS_CHOICES,
        "page": shown.page, "pages": shown.pages, "show_all": shown.show_all, "query": query,
        "first_index": shown.first_index,
        # Each pilot's page address is this and the id: one url_for, not one per row (each walks the routes).
        "person_page": str(request.url_for("person_currency_page", person_id=0)).removesuffix("0"),
    }, fragment="currency/_board.html")


@router.get("/currency/board.csv", name="readiness_board_csv")
def readiness_board_csv(request: Request, db: DbSession, person: SetupUser, as_of: str | None = None,
                        role: str | None = None, rule_id: str | None = None, status: str | None = None):
    """Every cell of the board as shown (same filters, every page), one line per pilot and rule."""
    day, _ = _as_of(db, as_of)
    columns, lines = _board_grid(request, db, day, _board_filters(role, rule_id, status))
    return Response(board.board_csv(board.cells_of(lines, columns)), media_type="text/csv; charset=utf-8", headers={
        "Content-Disposition": f'attachment; filename="readiness-{day.isoformat()}.csv"', "Cache-Control": "no-store"})


@router.get("/currency/people/{person_id}", name="person_currency_page")
def person_currency_page(request: Request, db: DbSession, person: PageUser, person_id: int):
    """One person's own currency: a page, or the fragment a home page or progress file loads."""
    if not access.can_view_pilot(db, viewer=person, pilot_id=person_id):
        raise NotFound("No such person.")
    subject = db.get(Person, person_id)
    if subject is None:
        raise NotFound("No such person.")
    day = people.school_today(db)
    rows = board.person_standings(db, person_id=person_id, as_of=day)
    return render(request, "currency/person.html", {
        "person": person, "subject": subject, "own_currency": rows, "as_of": day, "as_of_words": format_date(day),
    }, fragment="currency/_own_currency.html")


# ---- rules ---------------------------------------------------------------------------------

def _rule_choices(db) -> dict:
    return {
        "maneuver_choices": list(MANEUVER_LABELS.items()),
        "termination_choices": list(TERMINATION_LABELS.items()),
        "type_choices": list(db.execute(select(HelicopterType.id, HelicopterType.designation)
                                        .order_by(HelicopterType.designation))),
        "people_choices": list(db.execute(select(Person.id, Person.name).where(Person.active)
                                          .order_by(Person.name))),
        "role_choices": [(r, ROLE_LABELS[r]) for r in ROLES],
    }


def _rule_form_values(form) -> dict:
    """Form fields to RuleCreate fields: lists from checkboxes, blanks as "no condition"."""
    def number(name):
        raw = (form.get(name) or "").strip()
        return raw or None

    window = number("window")
    unit = form.get("window_unit") or "days"
    instructor = form.get("with_instructor") or ""
    return {
        "name": (form.get("name") or "").strip(),
        "applies_to_roles": form.getlist("applies_to_roles"),
        "applies_to_people": [p for p in form.getlist("applies_to_people") if p],
        "maneuvers": form.getlist("maneuvers"),
        "terminations": form.getlist("terminations"),
        "type_ids": [t for t in form.getlist("type_ids") if t],
        "with_instructor": {"yes": True, "no": False}.get(instructor),
        "min_score": number("min_score"),
        "require_satisfactory": form.get("require_satisfactory") == "on",
        "window_days": window if unit == "days" else None,
        "window_months": window if unit == "months" else None,
        "min_count": number("min_count"),
        "warn_days": number("warn_days"),
    }


def _shown_values(values: dict, unit: str) -> dict:
    shown = dict(values)
    shown["window"] = values.get("window_days") or values.get("window_months")
    shown["window_unit"] = unit
    return shown


def _rule_values_for_form(rule: CurrencyRule) -> dict:
    values = rules_service.rule_values(rule)
    return _shown_values(values, "months" if rule.window_months is not None else "days")


def _rules_page(request: Request, db, person: Person, *, values: dict, errors: dict, message: str | None,
                status_code: int = 200):
    names = rules_service.type_names(db)
    rules = rules_service.list_rules(db)
    return render(request, "currency/rules.html", {
        "person": person, "rules": rules, "values": values, "errors": errors, "message": message,
        # "at least 1 satisfactory autorotation", "at least 2 ... autorotations"
        "described": {r.id: rules_service.describe(r, names)[0 if r.min_count != 1 else 1] for r in rules},
        "windows": {r.id: rules_service.window_words(r) for r in rules},
        **_rule_choices(db),
    }, status_code=status_code)


NEW_RULE_DEFAULTS = {"window": 90, "window_unit": "days", "min_count": 1, "warn_days": 14,
                     "require_satisfactory": True}


@router.get("/currency/rules", name="currency_rules")
def currency_rules(request: Request, db: DbSession, person: SetupUser):
    return _rules_page(request, db, person, values=NEW_RULE_DEFAULTS, errors={}, message=None)


async def _submitted_rule(request: Request, db) -> tuple[RuleCreate | None, dict, dict, str | None]:
    form = await request.form()
    values = _rule_form_values(form)
    data, errors, message = validate(RuleCreate, values)
    for name in ("window_days", "window_months"):
        if name in errors:
            errors["window"] = errors.pop(name)
    return data, errors, _shown_values(values, form.get("window_unit") or "days"), message


@router.post("/currency/rules", name="currency_rule_create")
async def currency_rule_create(request: Request, db: DbSession, person: SetupUser):
    data, errors, shown, message = await _submitted_rule(request, db)
    if data is not None:
        try:
            rules_service.create_rule(db, actor=person, data=data)
        except Invalid as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for("currency_rules"), status_code=303)
    return _rules_page(request, db, person, values=shown, errors=errors,
                       message=message or "Some entries need a look: see the marked fields.", status_code=422)


@router.get("/currency/rules/{rule_id}", name="currency_rule_edit")
def currency_rule_edit(request: Request, db: DbSession, person: SetupUser, rule_id: int):
    rule = rules_service.get_rule(db, rule_id=rule_id)
    return render(request, "currency/rule_edit.html", {
        "person": person, "rule": rule, "values": _rule_values_for_form(rule), "errors": {}, "message": None,
        **_rule_choices(db),
    })


@router.post("/currency/rules/{rule_id}", name="currency_rule_update")
async def currency_rule_update(request: Request, db: DbSession, person: SetupUser, rule_id: int):
    rule = rules_service.get_rule(db, rule_id=rule_id)
    data, errors, shown, message = await _submitted_rule(request, db)
    if data is not None:
        try:
            rules_service.update_rule(db, actor=person, rule=rule, data=data)
        except Invalid as error:
            message = error.message
        else:
            return RedirectResponse(request.url_for("currency_rules"), status_code=303)
    return render(request, "currency/rule_edit.html", {
        "person": person, "rule": rule, "values": shown, "errors": errors,
        "message": message or "Some entries need a look: see the marked fields.", **_rule_choices(db),
    }, status_code=422)


@router.post("/currency/rules/{rule_id}/delete", name="currency_rule_delete")
def currency_rule_delete(request: Request, db: DbSession, person: SetupUser, rule_id: int):
    rules_service.delete_rule(db, actor=person, rule=rules_service.get_rule(db, rule_id=rule_id))
    return RedirectResponse(request.url_for("currency_rules"), status_code=303)


# ---- calendar links ------------------------------------------------------------------------

def _calendar_page(request: Request, db, person: Person, *, new_url: str | None = None, status_code: int = 200):
    rows = feeds.list_feeds(db, owner=person)
    ids = {f.person_id for f in rows} - {None}
    names = {pid: name for pid, name in db.execute(select(Person.id, Person.name).where(Person.id.in_(ids)))}
    return render(request, "currency/calendar.html", {
        "person": person, "feeds": rows, "names": names, "new_url": new_url,
    }, status_code=status_code)


@router.get("/currency/calendar", name="calendar_links")
def calendar_links(request: Request, db: DbSession, person: PageUser):
    """Your secret calendar links: make one, copy it into a calendar program, revoke it."""
    return _calendar_page(request, db, person)


@router.post("/currency/calendar", name="calendar_link_create")
async def calendar_link_create(request: Request, db: DbSession, person: PageUser):
    form = await request.form()
    whose = form.get("whose") or "me"
    _, secret = feeds.create_feed(db, actor=person, person_id=None if whose == "school" else person.id)
    return _calendar_page(request, db, person, new_url=str(request.url_for("currency_feed", secret=secret)))


@router.post("/currency/calendar/{feed_id}/revoke", name="calendar_link_revoke")
def calendar_link_revoke(request: Request, db: DbSession, person: PageUser, feed_id: int):
    feeds.revoke_feed(db, actor=person, feed_id=feed_id)
    return RedirectResponse(request.url_for("calendar_links"), status_code=303)
