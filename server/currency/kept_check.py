"""`flarebook currency verify`: the kept state against a full evaluation from the whole history.

Three checks per active person and rule that applies to them: a kept row exists (and none is kept
for anyone else); the kept dates, pruned as a fresh computation today would prune them, are the
dates the history gives; and the board's standing for today from the kept row (status, date,
count, what to do) is the one the set-wise evaluation gives. A row's other columns are checked
against its own dates, so a changed column is found even on a day it would not yet show.
"""
from dataclasses import dataclass, fields
from datetime import date

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.compute.currency import KeptFacts, kept_dates, kept_facts
from server.currency import board, kept
from server.currency import service as rules_service
from server.currency.models import KeptStanding
from server.people import service as people
from server.people.models import Person

SHOWN = ("status", "current_until", "qualifying_count", "needed", "remedy")


@dataclass(frozen=True)
class Difference:
    pilot_id: int
    rule_id: int
    what: str

    def line(self, names: dict[int, str], rules: dict[int, str]) -> str:
        return (f"pilot {self.pilot_id} ({names.get(self.pilot_id, 'unknown')}), rule {self.rule_id} "
                f"({rules.get(self.rule_id, 'removed')}): {self.what}")


def _stored_facts(row: KeptStanding) -> KeptFacts:
    return KeptFacts(dates_desc=tuple(date.fromisoformat(q) for q in row.dates), newest_on=row.newest_on,
                     current_until=row.current_until, still_counting=row.still_counting,
                     window_count=row.window_count, counted_through=row.counted_through)


def differences(session: Session) -> list[Difference]:
    today = people.school_today(session)
    rules = {rule.id: rule for rule in rules_service.list_rules(session)}
    fresh = kept.fresh_facts(session, rules=list(rules.values()), today=today)
    stored = {(row.pilot_id, row.rule_id): row for row in session.scalars(select(KeptStanding))}
    out = [Difference(pid, rid, "kept, but the rule does not apply to an active person")
           for pid, rid in sorted(stored.keys() - fresh.keys())]
    out += [Difference(pid, rid, "no kept row") for pid, rid in sorted(fresh.keys() - stored.keys())]
    for key in sorted(stored.keys() & fresh.keys()):
        row, rule = stored[key], rules[key[1]]
        window = {"window_days": rule.window_days, "window_months": rule.window_months, "min_count": rule.min_count}
        facts = _stored_facts(row)
        own = kept_facts(facts.dates_desc, as_of=row.counted_on, **window)
        for field in fields(KeptFacts):
            if getattr(facts, field.name) != getattr(own, field.name):
                out.append(Difference(*key, f"{field.name} is kept as {getattr(facts, field.name)!r}, its dates "
                                            f"give {getattr(own, field.name)!r}"))
        if row.counted_on > today:
            out.append(Difference(*key, f"counted on {row.counted_on}, after today ({today})"))
            continue
        if kept_dates(facts.dates_desc, as_of=today, **window) != fresh[key].dates_desc:
            out.append(Difference(*key, f"kept dates {[q.isoformat() for q in facts.dates_desc]}, the records give "
                                        f"{[q.isoformat() for q in fresh[key].dates_desc]}"))
    shown = board.kept_standings(session, as_of=today, rules=list(rules.values()))
    full = {(s.person_id, s.rule_id): s for s in board.evaluated_standings(session, as_of=today,
                                                                           rules=list(rules.values()))}
    for standing in shown or []:
        expected = full.get((standing.person_id, standing.rule_id))
        if expected is None:
            continue  # reported above as a row kept for no one
        for name in SHOWN:
            if getattr(standing, name) != getattr(expected, name):
                out.append(Difference(standing.person_id, standing.rule_id,
                                      f"today's board shows {name} {getattr(standing, name)!r}, the full "
                                      f"evaluation {getattr(expected, name)!r}"))
    return out


def report(session: Session) -> tuple[bool, str]:
    """(all equal, what to print)."""
    found = differences(session)
    if not found:
        count = session.query(KeptStanding).count()
        return True, f"Readiness board kept state matches a full evaluation ({count} rows)."
    names = dict(session.execute(select(Person.id, Person.name)).all())
    rules = {rule.id: rule.name for rule in rules_service.list_rules(session)}
    return False, "\n".join([f"{len(found)} difference{'' if len(found) == 1 else 's'} between the kept state "
                             "and a full evaluation (fix with `flarebook currency rebuild`):"]
                            + [d.line(names, rules) for d in found])
