"""The readiness board and each person's own currency: who stands where under which rule."""
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, timedelta

from sqlalchemy.orm import Session

from server.compute.currency import (
    STATUS_RANK,
    CurrencyStatus,
    evaluate_currency,
    format_date,
    status_from_facts,
)
from server.csv_export import csv_text
from server.currency import evaluation, kept, today_cells
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

    def csv_row(self) -> tuple:
        return (self.name, self.role_words, self.rule_name, self.label, self.date_words,
                self.qualifying_count, self.needed, self.remedy)


# ---- the cells: every person under every rule, before any Standing is made -----------------------

# A cell: (order, name rank, rule rank, person id, rule id, status). Sorted, soonest trouble first: never
# done, lapsed, due soon, current (`status_order`); earlier dates first within each; then the name, the
# rule's name, the ids. The first five are integers, so sorting thousands of cells compares integers only;
# cells with the same facts under the same rule share one CurrencyStatus.
Cell = tuple[int, int, int, int, int, CurrencyStatus]


def status_order(status: CurrencyStatus) -> int:
    """The status's rank, then its date (none last), as one integer."""
    return STATUS_RANK[status.status] * 10_000_000 + (status.current_until or date.max).toordinal()


@dataclass(slots=True)
class Cells:
    """The board's cells (sorted, soonest trouble first) with the people and rules they name."""

    people: dict[int, tuple[str, tuple[str, ...]]]  # id: (name, roles)
    rules: dict[int, tuple[int, str, int]]  # id: (id, name, warn_days)
    cells: list[Cell]

    def standing(self, cell: Cell) -> Standing:
        return _standing_of(cell[3], self.people[cell[3]], self.rules[cell[4]], cell[5])

    def standings(self) -> list[Standing]:
        return [self.standing(cell) for cell in self.cells]

    def keep(self, *, role: str | None = None, status: str | None = None) -> "Cells":
        """The cells of people with this role, in this status."""
        cells = self.cells
        if role:
            cells = [cell for cell in cells if role in self.people[cell[3]][1]]
        if status:
            cells = [cell for cell in cells if cell[5].status == status]
        return Cells(people=self.people, rules=self.rules, cells=cells)


def _ranks(values: dict[int, str]) -> dict[int, int]:
    """Each id's place among the values (equal values share a place)."""
    order = {value: i for i, value in enumerate(sorted(set(values.values())))}
    return {key: order[value] for key, value in values.items()}


def _cells(people_rows: dict[int, tuple[str, tuple[str, ...]]], rules: Sequence[CurrencyRule]) -> Cells:
    return Cells(people=people_rows, rules={rule.id: (rule.id, rule.name, rule.warn_days) for rule in rules}, cells=[])


def standings(session: Session, *, as_of: date, rules: Sequence[CurrencyRule] | None = None,
              person_ids: Sequence[int] | None = None) -> list[Standing]:
    """Every active person against every rule that applies to them, soonest trouble first."""
    return board_cells(session, as_of=as_of, rules=rules, person_ids=person_ids).standings()


def board_cells(session: Session, *, as_of: date, rules: Sequence[CurrencyRule] | None = None,
                person_ids: Sequence[int] | None = None) -> Cells:
    """The cells of every active person against every rule that applies to them, soonest trouble first.

    For the school's today the kept state answers (`server/currency/kept.py`); any other date is
    evaluated from the whole history."""
    rules = list(rules_service.list_rules(session) if rules is None else rules)
    if as_of == people.school_today(session):
        found = kept_cells(session, as_of=as_of, rules=rules, person_ids=person_ids)
        if found is not None:
            return found
    return evaluated_cells(session, as_of=as_of, rules=rules, person_ids=person_ids)


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
    return evaluated_cells(session, as_of=as_of, rules=rules, person_ids=person_ids).standings()


def evaluated_cells(session: Session, *, as_of: date, rules: Sequence[CurrencyRule],
                    person_ids: Sequence[int] | None = None) -> Cells:
    """The cells evaluated set-wise from the whole history (`evaluation.summaries`)."""
    people_rows = kept.active_people(session, person_ids)
    out = _cells({pid: (name, roles) for pid, name, roles in people_rows}, rules)
    pairs = [(person, rule) for person in people_rows for rule in rules
             if rules_service.applies_to(rule, person_id=person[0], roles=list(person[2]))]
    if not pairs:
        return out
    wanted_ids = {rule.id for _, rule in pairs}
    wanted_rules = [rule for rule in rules if rule.id in wanted_ids]
    found = evaluation.summaries(session, rules=wanted_rules, as_of=as_of,
                                 pilot_ids=None if person_ids is None else [p[0] for p in people_rows])
    types = rules_service.type_names(session)
    words = {rule.id: rules_service.describe(rule, types) for rule in wanted_rules}
    names = _ranks({pid: name.casefold() for pid, (name, _) in out.people.items()})
    rule_places = _ranks({rule.id: rule.name for rule in rules})
    for (person_id, _, _), rule in pairs:
        summary = found.get((person_id, rule.id), evaluation.NEVER)
        status = evaluation.status_for(rule, summary, as_of=as_of, words=words[rule.id])
        out.cells.append((status_order(status), names[person_id], rule_places[rule.id], person_id, rule.id, status))
    out.cells.sort()
    return out


def kept_standings(session: Session, *, as_of: date, rules: Sequence[CurrencyRule],
                   person_ids: Sequence[int] | None = None) -> list[Standing] | None:
    """The standings from the kept rows; None when a row was written after as_of (its dates may be pruned)."""
    found = kept_cells(session, as_of=as_of, rules=rules, person_ids=person_ids)
    return None if found is None else found.standings()


def kept_cells(session: Session, *, as_of: date, rules: Sequence[CurrencyRule],
               person_ids: Sequence[int] | None = None) -> Cells | None:
    """The cells from the kept rows; None when a row was written after as_of (its dates may be pruned).

    The whole board's cells are kept between boards and brought up to date from the rows written since
    (`today_cells`); one person's are made from their rows."""
    out = _cells({pid: (name, roles) for pid, name, roles in kept.active_people(session, person_ids)}, rules)
    if not rules:
        return out
    maker = _CellMaker(session, as_of=as_of, rules=rules, people=out.people)
    if person_ids is None:
        ordered = today_cells.cells(session, as_of=as_of, rule_ids=list(maker.by_id), rules_key=maker.rules_key,
                                    people=out.people, make=maker.cells)
    else:
        made = maker.cells(kept.today_rows(session, rule_ids=list(maker.by_id), person_ids=person_ids))
        ordered = None if made is None else sorted(made.values())
    if ordered is None:
        return None
    out.cells = ordered
    return out


class _CellMaker:
    """Turns kept fact rows into cells for one day, rules and set of people.

    Thousands of rows: each is compared as the driver gives its dates (ISO text on SQLite, dates on
    PostgreSQL, both ordered as the days are), and a status is made once per distinct set of facts."""

    def __init__(self, session: Session, *, as_of: date, rules: Sequence[CurrencyRule],
                 people: dict[int, tuple[str, tuple[str, ...]]]):
        self.session, self.as_of = session, as_of
        self.by_id = {rule.id: rule for rule in rules}
        types = rules_service.type_names(session)
        self.words = {rule.id: rules_service.describe(rule, types) for rule in rules}
        self.names = _ranks({pid: name.casefold() for pid, (name, _) in people.items()})
        self.rule_places = _ranks({rule.id: rule.name for rule in rules})
        # What else decides a status: the same facts under a rule since edited must not find the old one.
        self.rule_params = {rule.id: (rule.min_count, rule.warn_days, *self.words[rule.id]) for rule in rules}
        # What the cells were made for, beside the people: cells kept under it stand for the same rules.
        self.rules_key = tuple((rule.id, rule.name, rule.window_days, rule.window_months, self.rule_params[rule.id])
                               for rule in rules)

    def cells(self, rows: Sequence[tuple]) -> dict[tuple[int, int], Cell] | None:
        """The cells of these fact rows (`kept.FACT_COLUMNS`) by (pilot, rule), none for someone not shown;
        None when a row was counted after the day (evaluate from the history instead)."""
        as_of, by_id, words, names, rule_places, rule_params = (
            self.as_of, self.by_id, self.words, self.names, self.rule_places, self.rule_params)
        out: dict[tuple[int, int], Cell] = {}
        if not rows:
            return out
        today = as_of.isoformat() if isinstance(rows[0][2], str) else as_of
        reread = []
        statuses = _statuses_of(as_of)
        day = kept.as_date
        for pilot_id, rule_id, counted_on, newest_on, current_until, still, count, through in rows:
            if counted_on > today:
                return None
            name_place = names.get(pilot_id)
            if name_place is None:
                continue  # not active: refresh removes such rows in the same transaction; verify reports one left
            # `facts_hold_on`, written out: a call per row would cost more than the rest of this loop.
            if (newest_on is not None and newest_on > today) or (through is not None and through < today):
                reread.append((pilot_id, rule_id))
                continue
            key = (rule_id, current_until, count, newest_on is not None, still, rule_params[rule_id])
            found = statuses.get(key)
            if found is None:
                rule = by_id[rule_id]
                status = status_from_facts(
                    as_of=as_of, current_until=day(current_until), count_in_window=count,
                    ever=newest_on is not None, still_counting=still, min_count=rule.min_count,
                    warn_days=rule.warn_days, describe=words[rule_id][0], describe_one=words[rule_id][1])
                found = statuses[key] = (status_order(status), status)
            out[(pilot_id, rule_id)] = (found[0], name_place, rule_places[rule_id], pilot_id, rule_id, found[1])
        # A date left the window since the row was written, or a date ahead has come: count from its dates.
        for (pilot_id, rule_id), dates in kept.dates_of(self.session, reread).items():
            rule = by_id[rule_id]
            status = evaluate_currency(dates, as_of=as_of, window_days=rule.window_days,
                                       window_months=rule.window_months, min_count=rule.min_count,
                                       warn_days=rule.warn_days, describe=words[rule_id][0],
                                       describe_one=words[rule_id][1])
            out[(pilot_id, rule_id)] = (status_order(status), names[pilot_id], rule_places[rule_id], pilot_id,
                                        rule_id, status)
        return out


# The statuses made for one day's boards, by rule and facts: a board made afresh after a change (one
# pilot signed, say) finds nearly every status made already. Cells with the same facts under the same
# rule share one CurrencyStatus (board_json writes each distinct one once). A new day starts anew.
_STATUSES: dict[date, dict[tuple, tuple[int, CurrencyStatus]]] = {}
_MOST_STATUSES = 200_000  # a bound on memory: thousands are made per board


def _statuses_of(as_of: date) -> dict[tuple, tuple[int, CurrencyStatus]]:
    found = _STATUSES.get(as_of)
    if found is None or len(found) > _MOST_STATUSES:
        _STATUSES.clear()
        found = _STATUSES[as_of] = {}
    return found


def board(session: Session, *, as_of: date, role: str | None = None, rule_id: int | None = None,
          status: str | None = None) -> Cells:
    """The readiness board's cells with its filters; one rule evaluates only that rule."""
    rules = rules_service.list_rules(session)
    if rule_id is not None:
        rules = [rule for rule in rules if rule.id == rule_id]
    return board_cells(session, as_of=as_of, rules=rules).keep(role=role, status=status)


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
    worst: Standing  # the cell soonest in trouble, which places the pilot on the board

    @property
    def role_words(self) -> str:
        return self.worst.role_words


@dataclass(slots=True)
class Grid:
    """The board pivoted to one line per pilot, soonest trouble first: each line is the pilot's cells,
    worst first. A GridRow (with a Standing per cell) is made only for the lines shown."""

    cells: Cells
    lines: list[list[Cell]]
    _counts: dict[str, int] | None = None

    def rows(self, start: int = 0, stop: int | None = None) -> list[GridRow]:
        out = []
        for line in self.lines[start:stop]:
            shown = {cell[4]: self.cells.standing(cell) for cell in line}
            worst = shown[line[0][4]]
            out.append(GridRow(person_id=worst.person_id, name=worst.name, roles=worst.roles, cells=shown, worst=worst))
        return out

    def counts(self) -> dict[str, int]:
        """How many cells of the lines are in each status (counted once: a grid is kept between requests)."""
        if self._counts is None:
            counts = {key: 0 for key in STATUS_LABELS}
            for line in self.lines:
                for cell in line:
                    counts[cell[5].status] += 1
            self._counts = counts
        return dict(self._counts)


def grid(cells: Cells, *, status: str | None = None) -> Grid:
    """The cells pivoted to one line per pilot, soonest trouble first (the worst cell, then the name);
    `status` keeps pilots with a cell in it."""
    by_person: dict[int, list[Cell]] = {}
    for cell in cells.cells:  # sorted, so each pilot's first cell is their worst
        line = by_person.get(cell[3])
        if line is None:
            by_person[cell[3]] = [cell]
        else:
            line.append(cell)
    lines = [line for line in by_person.values()
             if status is None or any(cell[5].status == status for cell in line)]
    lines.sort(key=lambda line: (line[0][0], line[0][1], line[0][3]))  # worst's status and date, name, id
    return Grid(cells=cells, lines=lines)


def board_grid(session: Session, *, as_of: date, role: str | None = None, rule_id: int | None = None,
               status: str | None = None) -> tuple[list[CurrencyRule], Grid]:
    """The board's columns (the rules that apply to someone shown) and its lines, one per pilot."""
    lines = grid(board(session, as_of=as_of, role=role, rule_id=rule_id), status=status)
    return grid_columns(session, lines), lines


def grid_columns(session: Session, lines: Grid) -> list[CurrencyRule]:
    """The rules that apply to someone shown, in the rules' order."""
    used = {cell[4] for line in lines.lines for cell in line}
    return [rule for rule in rules_service.list_rules(session) if rule.id in used]


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


def cells_of(lines: Grid, columns: Sequence[CurrencyRule]) -> list[Standing]:
    """Every cell of the grid, pilot by pilot in the board's order, rule by rule in the columns' order."""
    return [line.cells[rule.id] for line in lines.rows() for rule in columns if rule.id in line.cells]


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


def board_page(lines: Grid, *, page: int, show_all: bool) -> BoardPage:
    """The page asked for (a page past the end shows the last one)."""
    total = len(lines.lines)
    pages = max(1, -(-total // PAGE_SIZE))
    page = min(page, pages)
    shown = lines.rows() if show_all else lines.rows((page - 1) * PAGE_SIZE, page * PAGE_SIZE)
    return BoardPage(rows=shown, total=total, counts=lines.counts(), page=page, pages=pages, show_all=show_all)


def board_csv(rows: list[Standing]) -> str:
    """The board as CSV text, through the app's one CSV writer (formula cells neutralised, with a BOM)."""
    return csv_text(CSV_HEADER, (row.csv_row() for row in rows), bom=True)
