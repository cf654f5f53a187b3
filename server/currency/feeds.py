"""Calendar feeds of currency due dates (iCalendar, RFC 5545) behind secret, revocable links."""
from datetime import date, datetime, timedelta

from icalendar import Alarm, Calendar, Event
from sqlalchemy import select
from sqlalchemy.orm import Session

from server.currency import board
from server.currency.models import CalendarFeed
from server.errors import Forbidden, NotFound
from server.logbook import access
from server.people.models import Person
from server.people.security import new_secret, sha256_hex
from server.records import audit
from server.types import utcnow

PRODID = "-//Flarebook//Currency due dates//EN"


def create_feed(session: Session, *, actor: Person, person_id: int | None) -> tuple[CalendarFeed, str]:
    """A new secret link; the secret is returned once and only its hash is kept."""
    if person_id is None and not actor.has_role("chief_pilot"):
        raise Forbidden("Only a chief pilot can make a calendar link for the whole school.")
    if person_id is not None and person_id != actor.id and not actor.has_role("chief_pilot"):
        raise Forbidden("You can make a calendar link for your own due dates only.")
    if person_id is not None and session.get(Person, person_id) is None:
        raise NotFound("No such person.")
    secret = new_secret("cal_")
    feed = CalendarFeed(owner_id=actor.id, person_id=person_id, token_sha256=sha256_hex(secret))
    session.add(feed)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="calendar_feed", entity_id=feed.id,
                 after={"person_id": person_id})
    return feed, secret


def list_feeds(session: Session, *, owner: Person) -> list[CalendarFeed]:
    return list(session.scalars(select(CalendarFeed).where(CalendarFeed.owner_id == owner.id)
                                .order_by(CalendarFeed.id.desc())))


def revoke_feed(session: Session, *, actor: Person, feed_id: int) -> CalendarFeed:
    """Stop a link from working at once; only its owner (or a chief pilot) can."""
    feed = session.get(CalendarFeed, feed_id)
    if feed is None or (feed.owner_id != actor.id and not actor.has_role("chief_pilot")):
        raise NotFound("No such calendar link.")
    if feed.revoked_at is None:
        feed.revoked_at = utcnow()
        audit.append(session, actor_id=actor.id, action="revoke", entity="calendar_feed", entity_id=feed.id)
    return feed


def feed_for_secret(session: Session, secret: str) -> CalendarFeed:
    """The live feed for a secret, still allowed for its owner; anything else is simply not found."""
    feed = session.scalar(select(CalendarFeed).where(CalendarFeed.token_sha256 == sha256_hex(secret)))
    if feed is None or feed.revoked_at is not None:
        raise NotFound("No such calendar.")
    owner = session.get(Person, feed.owner_id)
    if owner is None or not owner.active:
        raise NotFound("No such calendar.")
    if feed.person_id is None and not owner.has_role("chief_pilot"):
        raise NotFound("No such calendar.")
    if feed.person_id is not None and not access.can_view_pilot(session, viewer=owner, pilot_id=feed.person_id):
        raise NotFound("No such calendar.")
    return feed


def feed_standings(session: Session, feed: CalendarFeed, *, as_of: date) -> list[board.Standing]:
    if feed.person_id is None:
        return board.standings(session, as_of=as_of)
    return board.person_standings(session, person_id=feed.person_id, as_of=as_of)


def calendar_bytes(rows: list[board.Standing], *, name: str, made_at: datetime) -> bytes:
    """One all-day event per person and rule on the last day they are current, with a reminder
    as far ahead as the rule's warning lead time (at least a day)."""
    calendar = Calendar()
    calendar.add("prodid", PRODID)
    calendar.add("version", "2.0")
    calendar.add("x-wr-calname", name)
    for row in rows:
        if row.current_until is None:
            continue
        event = Event()
        event.add("uid", f"currency-{row.person_id}-{row.rule_id}-{row.current_until.isoformat()}@flarebook")
        event.add("dtstamp", made_at)
        event.add("dtstart", row.current_until)
        event.add("dtend", row.current_until + timedelta(days=1))
        event.add("summary", f"Last day current: {row.rule_name} ({row.name})")
        event.add("description", f"{row.label}. {row.remedy}")
        event.add("categories", ["Currency"])
        event.add("transp", "TRANSPARENT")
        if row.status in ("current", "due_soon"):
            alarm = Alarm()
            alarm.add("action", "DISPLAY")
            alarm.add("description", f"Currency ends soon: {row.rule_name} ({row.name})")
            alarm.add("trigger", timedelta(days=-max(row.warn_days, 1)))
            event.add_component(alarm)
        calendar.add_component(event)
    return calendar.to_ical()
