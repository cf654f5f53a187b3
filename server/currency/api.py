"""JSON API: currency rules, each person's currency, the readiness board, calendar links and feeds."""
import gzip
from datetime import date

from fastapi import APIRouter, Query, Request, Response
from pydantic import ValidationError
from pydantic_core import to_json

from server.currency import board, board_cache, feeds
from server.currency import service as rules_service
from server.currency.models import CalendarFeed, CurrencyRule
from server.currency.schemas import (
    BoardRead,
    CurrencyRead,
    FeedCreate,
    FeedRead,
    PersonCurrencyRead,
    RuleCreate,
    RuleRead,
    RuleUpdate,
    Status,
)
from server.deps import DbSession
from server.errors import Invalid, NotFound
from server.logbook import access
from server.people import service as people
from server.people.deps import ApiUser, SetupApiUser
from server.people.models import Person
from server.people.schemas import Role

router = APIRouter(tags=["currency"])
feed_router = APIRouter(include_in_schema=False)


def rule_read(rule: CurrencyRule, type_names: dict[int, str]) -> RuleRead:
    return RuleRead(id=rule.id, describe=rules_service.describe(rule, type_names)[0], **rules_service.rule_values(rule))


def currency_read(row: board.Standing) -> CurrencyRead:
    return CurrencyRead(rule_id=row.rule_id, rule_name=row.rule_name, status=row.status,
                        current_until=row.current_until, qualifying_count=row.qualifying_count,
                        needed=row.needed, remedy=row.remedy)


def feed_read(db, feed: CalendarFeed, url: str | None = None) -> FeedRead:
    person = db.get(Person, feed.person_id) if feed.person_id is not None else None
    return FeedRead(id=feed.id, person_id=feed.person_id, person_name=person.name if person else None,
                    created_at=feed.created_at.isoformat(), revoked=feed.revoked_at is not None, url=url)


@router.get("/rules", response_model=list[RuleRead])
def list_rules(db: DbSession, person: ApiUser):
    names = rules_service.type_names(db)
    return [rule_read(rule, names) for rule in rules_service.list_rules(db)]


@router.post("/rules", response_model=RuleRead, status_code=201)
def create_rule(data: RuleCreate, db: DbSession, person: ApiUser):
    rule = rules_service.create_rule(db, actor=person, data=data)
    return rule_read(rule, rules_service.type_names(db))


@router.get("/rules/{rule_id}", response_model=RuleRead)
def get_rule(rule_id: int, db: DbSession, person: ApiUser):
    return rule_read(rules_service.get_rule(db, rule_id=rule_id), rules_service.type_names(db))


@router.patch("/rules/{rule_id}", response_model=RuleRead)
def update_rule(rule_id: int, data: RuleUpdate, db: DbSession, person: ApiUser):
    rules_service.require_chief(person)
    rule = rules_service.get_rule(db, rule_id=rule_id)
    try:
        merged = rules_service.merged_update(rule, data)
    except ValidationError as error:
        raise Invalid("; ".join(str(e["msg"]).removeprefix("Value error, ") for e in error.errors())) from None
    rules_service.update_rule(db, actor=person, rule=rule, data=merged)
    return rule_read(rule, rules_service.type_names(db))


@router.delete("/rules/{rule_id}", status_code=204)
def delete_rule(rule_id: int, db: DbSession, person: ApiUser):
    rules_service.require_chief(person)
    rules_service.delete_rule(db, actor=person, rule=rules_service.get_rule(db, rule_id=rule_id))
    return Response(status_code=204)


@router.get("/people/{person_id}/currency", response_model=PersonCurrencyRead)
def person_currency(person_id: int, db: DbSession, person: ApiUser, as_of: date | None = None):
    """The person's standing under every rule that applies to them: self, their instructors, chief pilots."""
    if not access.can_view_pilot(db, viewer=person, pilot_id=person_id) or db.get(Person, person_id) is None:
        raise NotFound("No such person.")
    as_of = as_of or people.school_today(db)
    rows = board.person_standings(db, person_id=person_id, as_of=as_of)
    return PersonCurrencyRead(person_id=person_id, as_of=as_of, rules=[currency_read(r) for r in rows])


# Named apart from the readiness board page, which url_for("readiness_board") must find.
@router.get("/currency", response_model=BoardRead, name="readiness_board_api")
def readiness_board(request: Request, db: DbSession, person: SetupApiUser, as_of: date | None = None,
                    role: Role | None = None, rule_id: int | None = None, status: Status | None = None):
    """Every active pilot against every rule that applies, soonest trouble first (chief pilots).

    Today's board is kept, compressed once, while nothing on it changes (`board_cache`); every chief
    pilot sees the same whole school, so the viewer is not part of the key."""
    today = people.school_today(db)
    as_of = as_of or today

    def made() -> tuple[bytes, bytes]:
        body = board_json(as_of, board.board(db, as_of=as_of, role=role, rule_id=rule_id, status=status))
        # Level 1: a third of level 6's time for a board that may be made afresh after every change.
        return body, gzip.compress(body, compresslevel=1)

    if as_of != today:
        return Response(made()[0], media_type="application/json")  # the app's GZip middleware compresses it
    body, packed = board_cache.kept_for_today(request.app, db, ("json", today, role, rule_id, status), made)
    if "gzip" in request.headers.get("accept-encoding", ""):  # as the GZip middleware reads it
        return Response(packed, media_type="application/json",
                        headers={"Content-Encoding": "gzip", "Vary": "Accept-Encoding"})
    return Response(body, media_type="application/json")


def board_json(as_of: date, cells: board.Cells) -> bytes:
    """BoardRead as bytes, from plain values, without a model or a dict per row (thousands on a large
    school's board): each row's fields are serialised once, by pydantic's own encoder, and kept beside
    the cell (`_row_part`), so a board made afresh after a change serialises only the cells it made anew."""
    rows = []
    people_parts: dict[int, bytes] = {}
    for cell in cells.cells:
        found = _ROW_PARTS.get(id(cell))
        rows.append(found[1] if found is not None and found[0] is cell else _row_part(cell, cells, people_parts))
    return b"".join((b'{"as_of":', to_json(as_of), b',"rows":[', b",".join(rows), b"]}"))


# Today's cells are kept between boards (`server/currency/today_cells.py`) while the people and rules
# they were made for stand, and a cell is shown only with those: each row's bytes are kept by the cell's
# identity (the cell is held too, so its id stays its own). Statuses are shared by every cell with the
# same facts under one rule (`board._statuses_of`): their fields are serialised once per status.
_ROW_PARTS: dict[int, tuple[tuple, bytes]] = {}
_STATUS_PARTS: dict[tuple[int, int, str], tuple[object, bytes]] = {}
_MOST_PARTS = 100_000  # a bound on memory: a large school's board has thousands of rows


def _row_part(cell: board.Cell, cells: board.Cells, people_parts: dict[int, bytes]) -> bytes:
    person_id = cell[3]
    person = people_parts.get(person_id)
    if person is None:
        name, roles = cells.people[person_id]
        person = people_parts[person_id] = to_json({"person_id": person_id, "name": name, "roles": roles})[1:-1]
    part = b"".join((b"{", person, b",", _status_part(cell[5], cells.rules[cell[4]]), b"}"))
    if len(_ROW_PARTS) > _MOST_PARTS:
        _ROW_PARTS.clear()
    _ROW_PARTS[id(cell)] = (cell, part)
    return part


def _status_part(status, rule: tuple[int, str, int]) -> bytes:
    key = (id(status), rule[0], rule[1])
    found = _STATUS_PARTS.get(key)
    if found is not None and found[0] is status:
        return found[1]
    if len(_STATUS_PARTS) > _MOST_PARTS:
        _STATUS_PARTS.clear()
    part = to_json({"rule_id": rule[0], "rule_name": rule[1], "status": status.status,
                    "current_until": status.current_until, "qualifying_count": status.qualifying_count,
                    "needed": status.needed, "remedy": status.remedy})[1:-1]
    _STATUS_PARTS[key] = (status, part)
    return part


@router.get("/calendar-feeds", response_model=list[FeedRead])
def list_feeds(db: DbSession, person: ApiUser):
    return [feed_read(db, feed) for feed in feeds.list_feeds(db, owner=person)]


@router.post("/calendar-feeds", response_model=FeedRead, status_code=201)
def create_feed(data: FeedCreate, request: Request, db: DbSession, person: ApiUser):
    """A secret calendar link; its address is shown in this answer only."""
    feed, secret = feeds.create_feed(db, actor=person, person_id=data.person_id)
    return feed_read(db, feed, url=str(request.url_for("currency_feed", secret=secret)))


@router.delete("/calendar-feeds/{feed_id}", status_code=204)
def revoke_feed(feed_id: int, db: DbSession, person: ApiUser):
    feeds.revoke_feed(db, actor=person, feed_id=feed_id)
    return Response(status_code=204)


@feed_router.get("/calendar/{secret}.ics", name="currency_feed")
def currency_feed(secret: str, db: DbSession, as_of: date | None = Query(default=None)):
    """The feed itself: the secret in the address is the credential, so no session is needed."""
    feed = feeds.feed_for_secret(db, secret)
    as_of = as_of or people.school_today(db)
    rows = feeds.feed_standings(db, feed, as_of=as_of)
    name = "Currency due dates" + ("" if feed.person_id is None else f": {db.get(Person, feed.person_id).name}")
    body = feeds.calendar_bytes(rows, name=name, made_at=feeds.utcnow())
    return Response(body, media_type="text/calendar; charset=utf-8",
                    headers={"Cache-Control": "no-store", "Content-Disposition": 'inline; filename="currency.ics"'})
