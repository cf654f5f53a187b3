"""The readiness board and each person's own currency: who stands where under which rule."""
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, timedelta

from sqlalchemy.orm import Session

from server.compute.currency import (
    STATUS_RANK,
    CurrencyStatus,
    evaluate_currency,
    facts_hold_on,
    format_date,
    status_from_facts,
)
from server.csv_export import csv_text
from server.currency import evaluation, kept
from server.currency import service as rules_service
from server.currency.models import CurrencyRule
from server.people import service as people
from server.vocabulary import ROLE_LABELS

STATUS_LABELS = {"current": "Current", "due_soon": "Due soon", "lapsed": "Lapsed", "never": "Never done"}
# Our own shapes, so a status never rests on colour alone.
STATUS_SHAPES = {"current": "●", "due_soon": "◐", "lapsed": "✕", "never": "○"}
PAGE_SIZE = 50  # pilots per page: a school of 40 reads on one page
CSV_HEADER = ("Pilot", "Roles", "Rule", "Status", "Date", "Qualifying in window", "Needed", "What to do")


@dataclass(slots=True)  # not frozen: a frozen init costs three times as much, on thousands of rows
class Standing:
    """One person under one rule on the as-of date: a board row, an API row, a line on a home page.

    Made once and never changed."""

    person_id: int
    name: str
    roles: tuple[str, ...]
    rule_id: int
    rule_name: str
    status: str
    current_until: date | None
    qualifying_count: int
    needed: int
    remedy: str
    warn_days: int  # the rule's warning lead time, for calendar reminders

    @property
    def label(self) -> str:
        return STATUS_LABELS[self.status]

    @property
    def shape(self) -> str:
        return STATUS_SHAPES[self.status]

    @property
    def role_words(self) -> str:
        return ", ".join(ROLE_LABELS.get(role, role) for role in self.roles)

    @property
    def date_words(self) -> str:
        """The date that matters, in words: until when current, or since when lapsed."""
        if self.current_until is None:
            return ""
        if self.status == "lapsed":
            return f"since {format_date(self.current_until + timedelta(days=1))}"
        return f"until {format_date(self.current_until)}"

    def sort_key(self) -> tuple:
        """Soonest trouble first: never done, lapsed, due soon, current; earlier dates first within each."""
        return (STATUS_RANK[self.status], self.current_until or date.max, self.name.casefold(), self.rule_name,
                self.person_id, self.rule_id)

    def csv_row(self) -> tuple:
        return (self.name, self.role_words, self.rule_name, self.label, self.date_words,
                self.qualifying_count, self.needed, self.remedy)


def standings(session: Session, *, as_of: date, rules: Sequence[CurrencyRule] | None = None,
              person_ids: Sequence[int] | None = None) -> list[Standing]:
    """Every active person against every rule that applies to them, soonest trouble first.

    For the school's today the kept state answers (`server/currency/kept.py`); any other date is
    evaluated from the whole history."""
    rules = list(rules_service.list_rules(session) if rules is None else rules)
    if as_of == people.school_today(session):
        found = kept_standings(session, as_of=as_of, rules=rules, person_ids=person_ids)
        if found is not None:
            return found
    return evaluated_standings(session, as_of=as_of, rules=rules, person_ids=person_ids)


def _standing(person_id: int, person: tuple[str, tuple[str, ...]], rule: CurrencyRule,
              status: CurrencyStatus) -> Standing:
    return _standing_of(person_id, person, (rule.id, rule.name, rule.warn_days), status)


def _standing_of(person_id: int, person: tuple[str, tuple[str, ...]], rule: tuple[int, str, int],
                 status: CurrencyStatus) -> Standing:
    """rule: (id, name, warn_days), read once per rule rather than through the ORM per row."""
    return Standing(person_id=person_id, name=person[0], roles=person[1], rule_id=rule[0], rule_name=rule[1],
                    status=status.status, current_until=status.current_until,
                    qualifying_count=status.qualifying_count, needed=status.needed, remedy=status.remedy,
                    warn_days=rule[2])


def evaluated_standings(session: Session, *, as_of: date, rules: Sequence[CurrencyRule],
                        person_ids: Sequence[int] | None = None) -> list[Standing]:
    """The standings evaluated set-wise from the whole history (`evaluation.summaries`)."""
    people_rows = kept.active_people(session, person_ids)
    pairs = [(person, rule) for person in people_rows for rule in rules
             if rules_service.applies_to(rule, person_id=person[0], roles=list(person[2]))]
    if not pairs:
        return []
    wanted_ids = {rule.id for _, rule in pairs}
    wanted_rules = [rule for rule in rules if rule.id in wanted_ids]
    found = evaluation.summaries(session, rules=wanted_rules, as_of=as_of,
                                 pilot_ids=None if person_ids is None else [p[0] for p in people_rows])
    types = rules_service.type_names(session)
    words = {rule.id: rules_service.describe(rule, types) for rule in wanted_rules}
    out = []
    for (person_id, name, roles), rule in pairs:
        summary = found.get((person_id, rule.id), evaluation.NEVER)
        status = evaluation.status_for(rule, summary, as_of=as_of, words=words[rule.id])
        out.append(_standing(person_id, (name, roles), rule, status))
    out.sort(key=Standing.sort_key)
    return out


def kept_standings(session: Session, *, as_of: date, rules: Sequence[CurrencyRule],
                   person_ids: Sequence[int] | None = None) -> list[Standing] | None:
    """The standings from the kept rows; None when a row was written after as_of (its dates may be pruned)."""
    if not rules:
        return []
    who = {pid: (name, roles) for pid, name, roles in kept.active_people(session, person_ids)}
    by_id = {rule.id: rule for rule in rules}
    types = rules_service.type_names(session)
    words = {rule.id: rules_service.describe(rule, types) for rule in rules}
    plain = {rule.id: (rule.id, rule.name, rule.warn_days) for rule in rules}
    out, reread = [], []
    statuses: dict[tuple, CurrencyStatus] = {}  # the same facts under the same rule: the same status, made once
    day = kept.as_date
    for pilot_id, rule_id, counted_on, newest_on, current_until, still, count, through in kept.today_rows(
            session, rule_ids=list(by_id), person_ids=person_ids):
        counted_on, newest_on, current_until, through = day(counted_on), day(newest_on), day(current_until), day(through)
        if counted_on > as_of:
            return None
        person = who.get(pilot_id)
        if person is None:
            continue  # not active: refresh removes such rows in the same transaction; verify reports one left
        if not facts_hold_on(as_of, counted_on=counted_on, newest_on=newest_on, counted_through=through):
            reread.append((pilot_id, rule_id))
            continue
        key = (rule_id, current_until, count, newest_on is not None, still)
        status = statuses.get(key)
        if status is None:
            rule = by_id[rule_id]
            status = statuses[key] = status_from_facts(
                as_of=as_of, current_until=current_until, count_in_window=count, ever=newest_on is not None,
                still_counting=still, min_count=rule.min_count, warn_days=rule.warn_days,
                describe=words[rule_id][0], describe_one=words[rule_id][1])
        out.append(_standing_of(pilot_id, person, plain[rule_id], status))
    # A date left the window since the row was written, or a date ahead has come: count from its dates.
    for (pilot_id, rule_id), dates in kept.dates_of(session, reread).items():
        rule = by_id[rule_id]
        status = evaluate_currency(dates, as_of=as_of, window_days=rule.window_days, window_months=rule.window_months,
                                   min_count=rule.min_count, warn_days=rule.warn_days, describe=words[rule_id][0],
                                   describe_one=words[rule_id][1])
        out.append(_standing(pilot_id, who[pilot_id], rule, status))
    out.sort(key=Standing.sort_key)
    return out


def board(session: Session, *, as_of: date, role: str | None = None, rule_id: int | None = None,
          status: str | None = None) -> list[Standing]:
    """The readiness board with its filters; one rule evaluates only that rule."""
    rules = rules_service.list_rules(session)
    if rule_id is not None:
        rules = [rule for rule in rules if rule.id == rule_id]
    rows = standings(session, as_of=as_of, rules=rules)
    if role:
        rows = [row for row in rows if role in row.roles]
    if status:
        rows = [row for row in rows if row.status == status]
    return rows


def person_standings(session: Session, *, person_id: int, as_of: date) -> list[Standing]:
    return standings(session, as_of=as_of, person_ids=[person_id])


# ---- the board as a grid: one row per pilot, one column per rule ---------------------------------

SHORT_NAME_LENGTH = 36  # two lines of a column heading at 1024 px with six rules


def short_rule_name(name: str, limit: int = SHORT_NAME_LENGTH) -> str:
    """A column heading: the rule's name, cut at a word before `limit` characters when longer."""
    if len(name) <= limit:
        return name
    cut = name[:limit].rsplit(" ", 1)[0].rstrip(" ,;:-") or name[:limit]
    return cut + "…"


def cell_words(standing: Standing) -> str:
    """Under the status in a grid cell: "until 1 Dec 2026", "since 3 Nov 2026", or what is missing."""
    if standing.current_until is None:
        if standing.status == "never":
            return f"{standing.needed} to fly"
        return f"not yet current: {standing.needed} more" if standing.needed else ""
    day = standing.current_until + timedelta(days=1) if standing.status == "lapsed" else standing.current_until
    return f"{'since' if standing.status == 'lapsed' else 'until'} {day.day} {day:%b %Y}"


@dataclass(frozen=True)
class GridRow:
    """One pilot across the board's rules; a rule that does not apply to them has no cell."""

    person_id: int
    name: str
    roles: tuple[str, ...]
    cells: dict[int, Standing]

    @property
    def worst(self) -> Standing:
        return min(self.cells.values(), key=Standing.sort_key)

    @property
    def role_words(self) -> str:
        return self.worst.role_words

    def sort_key(self) -> tuple:
        """Soonest trouble first: the pilot's worst cell decides, then the name."""
        worst = self.worst
        return (STATUS_RANK[worst.status], worst.current_until or date.max, self.name.casefold(), self.person_id)


def grid(rows: Sequence[Standing], *, status: str | None = None) -> list[GridRow]:
    """The standings pivoted to one row per pilot, soonest trouble first; `status` keeps pilots with a cell in it."""
    by_person: dict[int, GridRow] = {}
    for row in rows:
        line = by_person.setdefault(row.person_id, GridRow(person_id=row.person_id, name=row.name,
                                                           roles=row.roles, cells={}))
        line.cells[row.rule_id] = row
    found = [line for line in by_person.values() if status is None
             or any(cell.status == status for cell in line.cells.values())]
    return sorted(found, key=GridRow.sort_key)


def board_grid(session: Session, *, as_of: date, role: str | None = None, rule_id: int | None = None,
               status: str | None = None) -> tuple[list[CurrencyRule], list[GridRow]]:
    """The board's columns (the rules that apply to someone shown) and its rows, one per pilot."""
    lines = grid(board(session, as_of=as_of, role=role, rule_id=rule_id), status=status)
    used = {rule_id for line in lines for rule_id in line.cells}
    return [rule for rule in rules_service.list_rules(session) if rule.id in used], lines


def rule_texts(session: Session, rules: Sequence[CurrencyRule]) -> dict[int, str]:
    """Each rule in full, for the column heading's "what it asks"."""
    names = rules_service.type_names(session)
    out = {}
    for rule in rules:
        many, one = rules_service.describe(rule, names)
        out[rule.id] = (f"At least {rule.min_count} {one if rule.min_count == 1 else many} in "
                        f"{rules_service.window_words(rule)}; warning {rule.warn_days} "
                        f"day{'' if rule.warn_days == 1 else 's'} ahead.")
    return out


def cells_of(lines: Sequence[GridRow], columns: Sequence[CurrencyRule]) -> list[Standing]:
    """Every cell of the grid, pilot by pilot in the board's order, rule by rule in the columns' order."""
    return [line.cells[rule.id] for line in lines for rule in columns if rule.id in line.cells]


@dataclass(frozen=True)
class BoardPage:
    """One page of the board's pilots (or all of them), with the counts per status of every cell."""

    rows: list[GridRow]
    total: int
    counts: dict[str, int]
    page: int
    pages: int
    show_all: bool

    @property
    def first_index(self) -> int:
        return 0 if self.show_all else (self.page - 1) * PAGE_SIZE


def board_page(rows: list[GridRow], *, page: int, show_all: bool) -> BoardPage:
    """The page asked for (a page past the end shows the last one)."""
    counts = {key: 0 for key in STATUS_LABELS}
    for row in rows:
        for cell in row.cells.values():
            counts[cell.status] += 1
    pages = max(1, -(-len(rows) // PAGE_SIZE))
    page = min(page, pages)
    shown = rows if show_all else rows[(page - 1) * PAGE_SIZE: page * PAGE_SIZE]
    return BoardPage(rows=shown, total=len(rows), counts=counts, page=page, pages=pages, show_all=show_all)


def board_csv(rows: list[Standing]) -> str:
    """The board as CSV text, through the app's one CSV writer (formula cells neutralised, with a BOM)."""
    return csv_text(CSV_HEADER, (row.csv_row() for row in rows), bom=True)
