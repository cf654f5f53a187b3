"""The readiness board's kept state: per active person and rule that applies to them, what the board needs.

Each row holds the facts of `server.compute.currency.kept_facts` for one pilot under one rule (the
qualifying dates that can still matter, the newest min_count of them giving `current_until`, the count
inside the window and the day through which that count holds). Rows are rewritten in the same
transaction as every change that can move them:

- a sortie signed (an amendment's signed version included): that pilot, and the earlier version's;
- a person added, their roles changed, deactivated or reactivated: that person;
- a rule added, edited or removed: that rule, for every person;
- an aircraft's type changed: every rule that names types.

Signing lives in the logbook, people and aircraft below currency (DEVELOPERS.md, layers), so those
areas keep hook lists (`server/logbook/hooks.py`, `server/people/hooks.py`, `server/fleet/hooks.py`)
that this module fills when it is imported; `server/models.py` imports it, so every process has them.
The board for today reads the rows (`today_rows`, `dates_of`); `flarebook currency verify` compares
them with a full evaluation (`server/currency/kept_check.py`).
"""
import time
from collections import defaultdict
from collections.abc import Iterable, Sequence
from datetime import date

from sqlalchemy import String, bindparam, delete, exists, insert, select, text, true, tuple_, type_coerce, update
from sqlalchemy.orm import Session

from server.compute.currency import KeptFacts, kept_facts
from server.currency import board_cache, evaluation
from server.currency import service as rules_service
from server.currency.models import CurrencyRule, KeptStanding
from server.fleet import hooks as fleet_hooks
from server.logbook import hooks as logbook_hooks
from server.logbook.models import Sortie
from server.people import hooks as people_hooks
from server.people import service as people
from server.people.models import Person, PersonRole

def _as_read(column):
    """A date column as the driver hands it over (see `as_date`)."""
    return type_coerce(column, String)


# Today's board reads thousands of these rows: dates come as the driver gives them (SQLite's text read
# by date.fromisoformat, which is C, rather than SQLAlchemy's pattern match), through the connection
# rather than the ORM's row handling.
FACT_COLUMNS = (KeptStanding.pilot_id, KeptStanding.rule_id, _as_read(KeptStanding.counted_on),
                _as_read(KeptStanding.newest_on), _as_read(KeptStanding.current_until), KeptStanding.still_counting,
                KeptStanding.window_count, _as_read(KeptStanding.counted_through))


def as_date(value, _seen: dict = {}) -> date | None:  # noqa: B006 (a cache of the few distinct days read)
    """A date read through `_as_read`: PostgreSQL's driver gives a date, SQLite's text an ISO string."""
    if value is None or isinstance(value, date):
        return value
    day = _seen.get(value)
    if day is None:
        day = _seen[value] = date.fromisoformat(value)
    return day


def active_people(session: Session, person_ids: Sequence[int] | None = None) -> list[tuple[int, str, tuple[str, ...]]]:
    """(id, name, roles) of every active person (or of those named), by name."""
    query = select(Person.id, Person.name).where(Person.active).order_by(Person.name, Person.id)
    role_query = select(PersonRole.person_id, PersonRole.role).order_by(PersonRole.role)
    if person_ids is not None:
        query = query.where(Person.id.in_(list(person_ids)))
        role_query = role_query.where(PersonRole.person_id.in_(list(person_ids)))
    roles: dict[int, list[str]] = {}
    connection = session.connection()  # thousands of rows on a large school's board: not through the ORM
    for person_id, role in connection.execute(role_query):
        roles.setdefault(person_id, []).append(role)
    return [(pid, name, tuple(roles.get(pid, ()))) for pid, name in connection.execute(query)]


def applicable_pairs(session: Session, rules: Sequence[CurrencyRule],
                     person_ids: Sequence[int] | None = None) -> list[tuple[int, CurrencyRule]]:
    """(person id, rule) for every active person and every given rule that applies to them."""
    return [(pid, rule) for pid, _, roles in active_people(session, person_ids) for rule in rules
            if rules_service.applies_to(rule, person_id=pid, roles=list(roles))]


def _window(rule: CurrencyRule) -> dict:
    return {"window_days": rule.window_days, "window_months": rule.window_months, "min_count": rule.min_count}


def fresh_facts(session: Session, *, rules: Sequence[CurrencyRule], today: date,
                person_ids: Sequence[int] | None = None) -> dict[tuple[int, int], KeptFacts]:
    """The kept facts of every applicable pair, computed from the whole history in one statement."""
    pairs = applicable_pairs(session, rules, person_ids)
    if not pairs:
        return {}
    used = {rule.id for _, rule in pairs}
    wanted = [rule for rule in rules if rule.id in used]
    pilots = None if person_ids is None else sorted({pid for pid, _ in pairs})
    result = session.execute(evaluation.summaries_statement(wanted, as_of=today, pilot_ids=pilots, for_keeping=True))
    names = list(result.keys())
    where = [(rule.id, names.index(f"n{i}")) for i, rule in enumerate(wanted)]
    dates: dict[tuple[int, int], list[date]] = defaultdict(list)
    for row in result:
        for rule_id, n_at in where:
            n = int(row[n_at])  # PostgreSQL sums come back as Decimal
            if n:
                # Each attempt counts: the date as often as attempts qualified on it (kept_facts prunes).
                dates[(row[0], rule_id)].extend([row[1]] * n)
    return {(pid, rule.id): kept_facts(dates.get((pid, rule.id), ()), as_of=today, **_window(rule))
            for pid, rule in pairs}


def written_now_us() -> int:
    """A kept row's write time: microseconds since 1970 by this process's clock (`today_cells` reads it)."""
    return time.time_ns() // 1000


def _row(pilot_id: int, rule_id: int, facts: KeptFacts, today: date) -> dict:
    return {"pilot_id": pilot_id, "rule_id": rule_id, "counted_on": today, "written_at_us": written_now_us(),
            "dates": [q.isoformat() for q in facts.dates_desc], "newest_on": facts.newest_on,
            "current_until": facts.current_until, "still_counting": facts.still_counting,
            "window_count": facts.window_count, "counted_through": facts.counted_through}


# Any fixed number, apart from the audit chain's: PostgreSQL advisory locks over the kept rows.
KEPT_LOCK_KEY = 0x6B657074  # "kept"


def lock_kept_rows(session: Session, person_ids: Sequence[int] | None) -> None:
    """Take turns over the kept rows until commit: a pilot's writers one at a time (a signing reads the
    rows it rewrites, so two at once would lose one's dates), and a change for everyone alone.

    PostgreSQL only: a shared lock on the whole state plus one lock per pilot, or the whole state's lock
    exclusively. On SQLite a writing transaction already holds the database's one write lock."""
    if session.get_bind().dialect.name != "postgresql":
        return
    if person_ids is None:
        session.execute(text("SELECT pg_advisory_xact_lock(:key)"), {"key": KEPT_LOCK_KEY})
        return
    ids = sorted(set(person_ids))
    if len(ids) == 1:  # a signature: both locks in one round trip (the order of these two cannot deadlock:
        # the whole state's exclusive holder takes no pilot's lock)
        session.execute(_LOCK_ONE_PILOT, {"key": KEPT_LOCK_KEY, "pilot_key": KEPT_LOCK_KEY & 0x7FFFFFFF,
                                          "person": ids[0]})
        return
    session.execute(text("SELECT pg_advisory_xact_lock_shared(:key)"), {"key": KEPT_LOCK_KEY})
    for person_id in ids:  # one order everywhere, so two writers never wait on each other
        session.execute(text("SELECT pg_advisory_xact_lock(:key, :person)"),
                        {"key": KEPT_LOCK_KEY & 0x7FFFFFFF, "person": person_id})


_LOCK_ONE_PILOT = text("SELECT pg_advisory_xact_lock_shared(:key), pg_advisory_xact_lock(:pilot_key, :person)")


def refresh(session: Session, *, person_ids: Iterable[int] | None = None, rule_ids: Iterable[int] | None = None) -> int:
    """Rewrite the kept rows of these people (None: everyone) under these rules (None: every rule).

    Rows of inactive people, removed rules or rules that no longer apply go; returns the rows written."""
    person_ids = None if person_ids is None else sorted(set(person_ids))
    rule_ids = None if rule_ids is None else sorted(set(rule_ids))
    if person_ids == [] or rule_ids == []:
        return 0
    lock_kept_rows(session, person_ids)
    board_cache.changed(session)
    gone = delete(KeptStanding)
    if person_ids is not None:
        gone = gone.where(KeptStanding.pilot_id.in_(person_ids))
    if rule_ids is not None:
        gone = gone.where(KeptStanding.rule_id.in_(rule_ids))
    session.execute(gone)
    rules = rules_service.list_rules(session)
    if rule_ids is not None:
        rules = [rule for rule in rules if rule.id in rule_ids]
    if not rules:
        return 0
    today = people.school_today(session)
    rows = [_row(pid, rule_id, facts, today) for (pid, rule_id), facts in
            fresh_facts(session, rules=rules, today=today, person_ids=person_ids).items()]
    _insert(session, rows)
    return len(rows)


def _insert(session: Session, rows: list[dict]) -> None:
    """Core multi-row INSERTs: the ORM's bulk path would send rows one statement at a time here."""
    if rows:
        session.connection().execute(insert(KeptStanding.__table__), rows)


def rebuild(session: Session) -> int:
    """Recompute every kept row from the whole history (`flarebook currency rebuild`)."""
    return refresh(session)


def rebuild_if_unbuilt(session: Session) -> int:
    """After a migration: no kept rows at all means never built (or nothing to keep, which costs nothing)."""
    if session.scalar(select(exists().where(KeptStanding.pilot_id.is_not(None)))):
        return 0
    return rebuild(session)


# ---- reading, for the board of today -------------------------------------------------------------

def today_rows(session: Session, *, rule_ids: Sequence[int], person_ids: Sequence[int] | None = None,
               with_write_times: bool = False):
    """The kept facts (FACT_COLUMNS order, dates through `as_date`) of these rules, of everyone or of the
    people named; with_write_times adds each row's `written_at_us` after them."""
    columns = (*FACT_COLUMNS, KeptStanding.written_at_us) if with_write_times else FACT_COLUMNS
    query = select(*columns).where(KeptStanding.rule_id.in_(list(rule_ids)))
    if person_ids is not None:
        query = query.where(KeptStanding.pilot_id.in_(list(person_ids)))
    return session.connection().execute(query).all()


def dates_of(session: Session, pairs: Sequence[tuple[int, int]]) -> dict[tuple[int, int], list[date]]:
    """The kept dates of the pairs whose facts no longer decide today's status alone."""
    out: dict[tuple[int, int], list[date]] = {}
    for start in range(0, len(pairs), 500):  # a bounded IN list
        chunk = pairs[start:start + 500]
        query = select(KeptStanding.pilot_id, KeptStanding.rule_id, KeptStanding.dates).where(
            tuple_(KeptStanding.pilot_id, KeptStanding.rule_id).in_(chunk))
        for pilot_id, rule_id, dates in session.execute(query):
            out[(pilot_id, rule_id)] = [date.fromisoformat(q) for q in dates]
    return out


# ---- the hooks: what moves the kept state ---------------------------------------------------------

def add_signed_sortie(session: Session, sortie: Sortie) -> bool:
    """A first version signed adds its qualifying dates to its pilot's rows; nothing else changes.

    Merging with the kept dates and pruning as of today gives what a recomputation would: a date pruned
    on the day a row was written is older than the window and than min_count newer dates, and stays so.
    False when the pilot has no kept row (never built, or no rule applies): then the caller recomputes.

    Every signature runs this, so it stays lean: the rules as plain rows, and both statements built once
    per set of rules rather than per call (building and keying a statement of a dozen rule conditions
    cost more than running it)."""
    rules = rules_service.list_rule_rows(session)
    if not rules:
        return True
    lock_kept_rows(session, [sortie.pilot_id])
    # One round trip: the pilot's kept rows, each beside the sortie's per-rule counts (one day per sortie).
    found = session.connection().execute(_rows_with_sortie_days(rules),
                                         {"sortie_id": sortie.id, "pilot_id": sortie.pilot_id}).all()
    if not found:
        return False
    stored = {row[0]: row[1] for row in found}
    wanted = [rule for rule in rules if rule.id in stored]
    at = {rule.id: 3 + i for i, rule in enumerate(rules)}  # rule_id, dates, flown_on, then one count per rule
    added: dict[int, list[date]] = defaultdict(list)
    for row in found:
        if row[2] is not None:
            added[row[0]].extend([as_date(row[2])] * int(row[at[row[0]]] or 0))
    changed = [rule for rule in wanted if added[rule.id]]
    if not changed:
        return True
    today = people.school_today(session)
    rows = [_row(sortie.pilot_id, rule.id, kept_facts([date.fromisoformat(q) for q in stored[rule.id]]
                                                      + added[rule.id], as_of=today, **_window(rule)), today)
            for rule in changed]
    # One executemany however many rules moved (psycopg pipelines it: one round trip, not one per row).
    board_cache.changed(session)
    session.connection().execute(_UPDATE_KEPT_ROW,
                                 [row | {"key_pilot": row["pilot_id"], "key_rule": row["rule_id"]} for row in rows])
    return True


_KEPT = KeptStanding.__table__
_UPDATE_KEPT_ROW = (update(_KEPT).where(_KEPT.c.pilot_id == bindparam("key_pilot"), _KEPT.c.rule_id == bindparam("key_rule"))
                    .values({c.name: bindparam(c.name) for c in _KEPT.c if c.name not in ("pilot_id", "rule_id")}))
# The rules list last seen with its statement: `list_rule_rows` gives the same list while the rules stand,
# so a signature finds it by identity; rules changed build it again (around evaluation's own statement,
# kept by the rules' content).
_LAST_RULES: list[tuple] = [(None, None)]


def _rows_with_sortie_days(rules) -> object:
    """The pilot's kept rows (bound `pilot_id`) beside the sortie's days (bound `sortie_id`)."""
    last_rules, statement = _LAST_RULES[0]
    if last_rules is not rules:
        days = evaluation.sortie_days_statement(rules).subquery("days")
        statement = (select(KeptStanding.rule_id, KeptStanding.dates, _as_read(days.c.flown_on),
                            *[days.c[f"n{i}"] for i in range(len(rules))])
                     .select_from(KeptStanding).outerjoin(days, true())
                     .where(KeptStanding.pilot_id == bindparam("pilot_id")))
        _LAST_RULES[0] = (rules, statement)
    return statement


def after_signing(session: Session, sorties: Sequence[Sortie]) -> None:
    """Signed sorties: a first version adds its dates; an amendment (or a batch) recomputes its pilots,
    with the pilot of the version an amendment replaces."""
    if len(sorties) == 1 and sorties[0].supersedes_id is None and add_signed_sortie(session, sorties[0]):
        return
    pilots = {sortie.pilot_id for sortie in sorties}
    earlier = [sortie.supersedes_id for sortie in sorties if sortie.supersedes_id is not None]
    if earlier:
        pilots |= set(session.scalars(select(Sortie.pilot_id).where(Sortie.id.in_(earlier))))
    refresh(session, person_ids=pilots)


def after_person_change(session: Session, person: Person) -> None:
    refresh(session, person_ids=[person.id])


def after_aircraft_retyped(session: Session, aircraft) -> None:
    refresh(session, rule_ids=[rule.id for rule in rules_service.list_rules(session) if rule.type_ids])


def after_rule_change(session: Session, rule_id: int) -> None:
    """A rule added, edited or removed (removed: its rows go)."""
    refresh(session, rule_ids=[rule_id])


def register_hooks() -> None:
    """Put this module's callables into the lower areas' hook lists, once."""
    for hooks, hook in ((logbook_hooks.AFTER_SIGNING, after_signing),
                        (people_hooks.AFTER_PERSON_CHANGE, after_person_change),
                        (fleet_hooks.AFTER_AIRCRAFT_RETYPED, after_aircraft_retyped)):
        if hook not in hooks:
            hooks.append(hook)


register_hooks()
