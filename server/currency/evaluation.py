"""Currency evaluated set-wise in SQL: one statement for every pilot and every rule (DESIGN 4.6).

The statement reads each qualifying attempt once, counts per pilot and day how many qualify under each
rule, then uses window functions over those days to find, per pilot and rule, the newest qualifying
dates (as many as the rule's minimum count), the count inside the rule's window and whether any ever
qualified. The pure `status_from_summary` turns each summary into a status, so the SQL path and
`evaluate_currency` share one definition of currency.
"""
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from datetime import date

from sqlalchemy import and_, bindparam, case, false, func, not_, or_, select, true
from sqlalchemy.orm import Session

from server.compute.currency import CurrencyStatus, status_from_summary, window_start
from server.currency.models import CurrencyRule
from server.fleet.models import Aircraft
from server.logbook.counted import counted_sorties_clause
from server.logbook.models import Attempt, Sortie


@dataclass(frozen=True)
class Summary:
    """What status_from_summary needs for one pilot and one rule."""

    latest_dates_desc: tuple[date, ...]
    count_in_window: int
    ever: bool


NEVER = Summary(latest_dates_desc=(), count_in_window=0, ever=False)


def _instructed():
    """An instructor aboard who is not the pilot being checked."""
    return and_(Sortie.instructor_id.is_not(None), Sortie.instructor_id != Attempt.pilot_id)


def counting_attempts_filter(as_of: date):
    """Attempts that can count at all: of a counted sortie (`counted_sorties_clause`), not taken over, flown by as_of."""
    return and_(counted_sorties_clause(), Attempt.takeover == false(), Attempt.flown_on <= as_of)


RULE_CONDITION_FIELDS = ("maneuvers", "terminations", "type_ids", "with_instructor", "min_score",
                         "require_satisfactory")


def rule_condition(rule: CurrencyRule):
    """What one attempt must be to qualify under the rule (empty lists and None mean any)."""
    conditions = [true()]
    if rule.maneuvers:
        conditions.append(Attempt.maneuver.in_(rule.maneuvers))
    if rule.terminations:
        conditions.append(Attempt.termination.in_(rule.terminations))
    if rule.type_ids:
        conditions.append(Aircraft.type_id.in_(rule.type_ids))
    if rule.with_instructor is not None:
        conditions.append(_instructed() if rule.with_instructor else not_(_instructed()))
    if rule.min_score is not None:
        conditions.append(Attempt.score >= rule.min_score)
    if rule.require_satisfactory:
        conditions.append(Attempt.satisfactory == true())
    return and_(*conditions)


def base_from(query):
    """Attempts joined to their sortie and aircraft, as every currency query reads them."""
    return query.select_from(Attempt).join(Sortie, Sortie.id == Attempt.sortie_id).join(
        Aircraft, Aircraft.id == Sortie.aircraft_id)


def summaries_statement(rules: Sequence[CurrencyRule], *, as_of: date, pilot_ids: Iterable[int] | None = None,
                        for_keeping: bool = False):
    """The one statement: rows of (pilot, day, per-rule count, running count, window count, total).

    for_keeping (the board's kept state, `server/currency/kept.py`): days after as_of are read too, and
    every qualifying day inside the window on as_of is kept, not only those of the newest attempts.
    """
    per_day = [func.sum(case((rule_condition(rule), 1), else_=0)).label(f"n{i}") for i, rule in enumerate(rules)]
    counting = (and_(counted_sorties_clause(), Attempt.takeover == false()) if for_keeping
                else counting_attempts_filter(as_of))
    days = base_from(select(Attempt.pilot_id, Attempt.flown_on, *per_day)).where(counting)
    if pilot_ids is not None:
        days = days.where(Attempt.pilot_id.in_(list(pilot_ids)))
    days = days.group_by(Attempt.pilot_id, Attempt.flown_on).subquery("days")

    # Days come out of the grouping in (pilot, day) order; windows over that same order need no new sort.
    by_day = {"partition_by": days.c.pilot_id, "order_by": days.c.flown_on}
    columns = [days.c.pilot_id, days.c.flown_on]
    for i, rule in enumerate(rules):
        n = days.c[f"n{i}"]
        start = window_start(as_of, window_days=rule.window_days, window_months=rule.window_months)
        # Qualifying attempts on this day or later (by as_of): this day's rank counted from the newest.
        by_as_of = case((days.c.flown_on <= as_of, n), else_=0) if for_keeping else n
        columns += [
            n,
            func.sum(by_as_of).over(**by_day, rows=(0, None)).label(f"run{i}"),
            func.sum(case((days.c.flown_on >= start, n), else_=0)).over(**by_day, rows=(None, None))
            .label(f"win{i}"),
            func.sum(n).over(**by_day, rows=(None, None)).label(f"tot{i}"),
        ]
    ranked = select(*columns).subquery("ranked")
    # Keep only the days that hold one of the min_count newest qualifying attempts of some rule.
    among_newest = [
        and_(ranked.c[f"n{i}"] > 0, ranked.c[f"run{i}"] - ranked.c[f"n{i}"] < rule.min_count)
        for i, rule in enumerate(rules)
    ]
    if for_keeping:
        among_newest += [
            and_(ranked.c[f"n{i}"] > 0, ranked.c.flown_on >= window_start(
                as_of, window_days=rule.window_days, window_months=rule.window_months))
            for i, rule in enumerate(rules)
        ]
    return select(ranked).where(or_(false(), *among_newest))


_SORTIE_DAYS: dict[tuple, object] = {}  # statements by the rules' content: built once, not per signature


def rules_key(rules: Sequence[CurrencyRule]) -> tuple:
    """What decides a statement built from these rules' conditions (rules, or rows of the rules table)."""
    return tuple((rule.id, *(repr(getattr(rule, name)) for name in RULE_CONDITION_FIELDS)) for rule in rules)


def sortie_days_statement(rules: Sequence[CurrencyRule]):
    """Rows of (day, per-rule count) of the attempts of the sortie bound as `sortie_id` that can count (not
    taken over): what a new signature adds to its pilot's kept state (`server/currency/kept.py`)."""
    key = rules_key(rules)
    statement = _SORTIE_DAYS.get(key)
    if statement is None:
        per_day = [func.sum(case((rule_condition(rule), 1), else_=0)).label(f"n{i}") for i, rule in enumerate(rules)]
        statement = base_from(select(Attempt.flown_on, *per_day)).where(
            Attempt.sortie_id == bindparam("sortie_id"), Attempt.takeover == false()).group_by(Attempt.flown_on)
        if len(_SORTIE_DAYS) > 64:
            _SORTIE_DAYS.clear()
        _SORTIE_DAYS[key] = statement
    return statement


def summaries(session: Session, *, rules: Sequence[CurrencyRule], as_of: date,
              pilot_ids: Iterable[int] | None = None) -> dict[tuple[int, int], Summary]:
    """Per (pilot_id, rule_id) with any qualifying attempt by as_of; a missing pair means never done."""
    if not rules:
        return {}
    counts: dict[tuple[int, int], int] = {}
    latest: dict[tuple[int, int], list[date]] = {}
    result = session.execute(summaries_statement(rules, as_of=as_of, pilot_ids=pilot_ids))
    # Column positions once, not a lookup by name per row and rule: the board reads thousands of rows.
    names = list(result.keys())
    where = [(rule.id, rule.min_count, names.index(f"n{i}"), names.index(f"run{i}"), names.index(f"win{i}"),
              names.index(f"tot{i}")) for i, rule in enumerate(rules)]
    for row in result:
        pilot_id, flown_on = row[0], row[1]
        for rule_id, min_count, n_at, run_at, win_at, tot_at in where:
            if not row[tot_at]:
                continue
            key = (pilot_id, rule_id)
            if key not in counts:
                counts[key] = int(row[win_at])  # PostgreSQL sums come back as Decimal
                latest[key] = []
            n, run = int(row[n_at]), int(row[run_at])
            if n and run - n < min_count:
                # Several attempts on one day each count: repeat the date as often as it is needed.
                latest[key].extend([flown_on] * min(n, min_count - (run - n)))
    return {key: Summary(latest_dates_desc=tuple(sorted(latest[key], reverse=True)), count_in_window=count,
                         ever=True) for key, count in counts.items()}


def status_for(rule: CurrencyRule, summary: Summary, *, as_of: date, words: tuple[str, str]) -> CurrencyStatus:
    """The one way from a summary to a status, shared with evaluate_currency."""
    return status_from_summary(
        as_of=as_of, latest_dates_desc=summary.latest_dates_desc, count_in_window=summary.count_in_window,
        ever=summary.ever, window_days=rule.window_days, window_months=rule.window_months,
        min_count=rule.min_count, warn_days=rule.warn_days, describe=words[0], describe_one=words[1],
    )

