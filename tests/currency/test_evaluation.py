"""Currency on stored data: the SQL path agrees with evaluate_currency, and what counts is what should."""
import random
from datetime import UTC, date, datetime, timedelta

import pytest
from sqlalchemy import insert

from server.compute.currency import evaluate_currency
from server.currency import board
from server.currency.models import CurrencyRule
from server.logbook import service as logbook
from server.logbook.models import Attempt, Sortie
from server.people.models import Person
from tests.support import add_second_type, make_sortie


def _rule(db, **fields) -> CurrencyRule:
    values = {"name": "Test rule", "applies_to_roles": [], "applies_to_people": [], "maneuvers": [],
              "terminations": [], "type_ids": [], "with_instructor": None, "min_score": None,
              "require_satisfactory": False, "window_days": 30, "window_months": None, "min_count": 1,
              "warn_days": 7} | fields
    rule = CurrencyRule(**values)
    db.add(rule)
    db.commit()
    return rule


def _at(day: date) -> datetime:
    return datetime(day.year, day.month, day.day, 10, 0, tzinfo=UTC)


def _standing(db, person, rule, as_of):
    rows = [r for r in board.person_standings(db, person_id=person.id, as_of=as_of) if r.rule_id == rule.id]
    assert len(rows) == 1
    return rows[0]


def test_unsigned_sorties_do_not_count(db, world):
    rule = _rule(db, applies_to_people=[world.student.id], applies_to_roles=["chief_pilot"])
    make_sortie(db, world, attempts=2, sign=False, flown_at=_at(date(2026, 11, 20)))
    assert _standing(db, world.student, rule, date(2026, 11, 25)).status == "never"
    make_sortie(db, world, attempts=1, sign=True, flown_at=_at(date(2026, 11, 21)))
    row = _standing(db, world.student, rule, date(2026, 11, 25))
    assert (row.status, row.qualifying_count, row.current_until) == ("current", 1, date(2026, 12, 21))


def test_takeover_never_qualifies(db, world):
    rule = _rule(db, applies_to_people=[world.student.id], applies_to_roles=["chief_pilot"])
    sortie = make_sortie(db, world, attempts=1, sign=False, flown_at=_at(date(2026, 11, 20)))
    attempt = sortie.attempts[0]
    attempt.takeover = True
    db.commit()
    logbook.record_instructor_signature(db, actor=db.get(Person, world.instructor.id), sortie=sortie)
    db.commit()
    assert _standing(db, world.student, rule, date(2026, 11, 25)).status == "never"


def test_rule_for_one_type_ignores_the_other(db, world):
    other_aircraft = add_second_type(db)
    rule = _rule(db, applies_to_people=[world.student.id], applies_to_roles=["chief_pilot"],
                 type_ids=[world.helicopter.id])
    sortie = make_sortie(db, world, attempts=2, sign=False, flown_at=_at(date(2026, 11, 20)))
    sortie.aircraft_id = other_aircraft.id
    db.commit()
    logbook.record_instructor_signature(db, actor=db.get(Person, world.instructor.id), sortie=sortie)
    db.commit()
    assert _standing(db, world.student, rule, date(2026, 11, 25)).status == "never"
    make_sortie(db, world, attempts=1, sign=True, flown_at=_at(date(2026, 11, 21)))
    assert _standing(db, world.student, rule, date(2026, 11, 25)).qualifying_count == 1


def test_amended_record_counts_once_as_its_newest_signed_version(db, world):
    rule = _rule(db, applies_to_people=[world.student.id], applies_to_roles=["chief_pilot"], min_count=5)
    instructor = db.get(Person, world.instructor.id)
    original = make_sortie(db, world, attempts=3, sign=True, flown_at=_at(date(2026, 11, 20)))
    amendment = logbook.amend_sortie(db, actor=instructor, sortie=original, reason="one attempt was logged twice")
    db.commit()
    # While the amendment is a draft, the signed original still counts, once.
    assert _standing(db, world.student, rule, date(2026, 11, 25)).qualifying_count == 3
    logbook.delete_attempt(db, actor=instructor, attempt=amendment.attempts[-1])
    db.flush()
    logbook.record_instructor_signature(db, actor=instructor, sortie=amendment)
    db.commit()
    assert _standing(db, world.student, rule, date(2026, 11, 25)).qualifying_count == 2


def test_instructor_aboard_means_someone_other_than_the_pilot(db, world):
    rule = _rule(db, applies_to_people=[world.instructor.id], applies_to_roles=["chief_pilot"], with_instructor=True)
    # An instructor logging their own practice has no instructor aboard.
    make_sortie(db, world, instructor=world.instructor, pilot=world.instructor, attempts=1, sign=True,
                flown_at=_at(date(2026, 11, 20)))
    assert _standing(db, world.instructor, rule, date(2026, 11, 25)).status == "never"
    make_sortie(db, world, instructor=world.chief, pilot=world.instructor, attempts=1, sign=True,
                flown_at=_at(date(2026, 11, 21)))
    assert _standing(db, world.instructor, rule, date(2026, 11, 25)).qualifying_count == 1


@pytest.mark.parametrize(("as_of", "status"), [
    # One attempt on 1 Nov 2026 under 30 days with 7 days' warning: counts through 1 Dec, warns from 24 Nov.
    (date(2026, 11, 23), "current"),    # the day before the warning starts
    (date(2026, 11, 24), "due_soon"),   # the first warning day: 7 days left
    (date(2026, 12, 1), "due_soon"),    # the last day current
    (date(2026, 12, 2), "lapsed"),      # the day after
])
def test_day_window_boundaries_on_stored_data(db, world, as_of, status):
    rule = _rule(db, applies_to_people=[world.student.id], applies_to_roles=["chief_pilot"])
    make_sortie(db, world, attempts=1, sign=True, flown_at=_at(date(2026, 11, 1)))
    row = _standing(db, world.student, rule, as_of)
    assert row.status == status
    assert row.current_until == date(2026, 12, 1)


@pytest.mark.parametrize(("flown", "months", "last_day"), [
    # Worked by hand: the window ends on the last day of the month `months` months after the flight's month.
    (date(2025, 8, 31), 6, date(2026, 2, 28)),   # month end into a short February
    (date(2023, 8, 15), 6, date(2024, 2, 29)),   # into a leap-year February (a past one: sorties cannot be dated ahead)
    (date(2024, 2, 29), 12, date(2025, 2, 28)),  # from 29 February into a common year
    (date(2025, 11, 10), 2, date(2026, 1, 31)),  # across the year end
])
def test_calendar_month_windows_through_the_api(db, world, chief_client, flown, months, last_day):
    """14 CFR 1.1 "calendar month", from memory: current through the month's last day, lapsed the day after."""
    rule = _rule(db, applies_to_people=[world.student.id], applies_to_roles=["chief_pilot"], window_days=None,
                 window_months=months, warn_days=0)
    make_sortie(db, world, attempts=1, sign=True, flown_at=_at(flown))

    def status_on(day):
        answer = chief_client.get(f"/api/v1/people/{world.student.id}/currency", params={"as_of": day.isoformat()})
        assert answer.status_code == 200
        (row,) = [r for r in answer.json()["rules"] if r["rule_id"] == rule.id]
        return row

    assert status_on(last_day - timedelta(days=1))["status"] == "current"
    on_the_day = status_on(last_day)
    assert on_the_day["status"] == "due_soon" and on_the_day["current_until"] == last_day.isoformat()
    after = status_on(last_day + timedelta(days=1))
    assert after["status"] == "lapsed" and after["needed"] == 1


def test_sql_path_agrees_with_evaluate_currency_on_random_data(app, db, world):
    """The key check: on seeded random records the SQL summaries give what the pure evaluation gives."""
    rng = random.Random(20261201)
    other_aircraft = add_second_type(db)
    pilots = [world.student, world.other_student, world.instructor, world.other_instructor]
    instructors = [world.instructor.id, world.other_instructor.id, world.chief.id, None]
    aircraft = {world.aircraft.id: world.helicopter.id, other_aircraft.id: other_aircraft.type_id}
    start = date(2025, 1, 1)
    sorties, attempts, truth = [], [], []
    sortie_id = attempt_id = 10_000
    for _ in range(220):
        sortie_id += 1
        pilot = rng.choice(pilots).id
        instructor = rng.choice(instructors)
        plane = rng.choice(list(aircraft))
        day = start + timedelta(days=rng.randint(0, 700))
        state = rng.choice(["signed"] * 5 + ["draft"])
        superseded_signed = False
        sorties.append(dict(id=sortie_id, version=1, state=state, flown_at=_at(day), aircraft_id=plane,
                            instructor_id=instructor, pilot_id=pilot, site_id=world.site.id, remarks="",
                            created_by_id=world.chief.id))
        rows = []
        for seq in range(rng.randint(1, 4)):
            attempt_id += 1
            rows.append(dict(id=attempt_id, sortie_id=sortie_id, sequence=seq + 1, pilot_id=pilot, flown_on=day,
                             maneuver=rng.choice(["straight_in", "turn_180", "turn_360", "hovering"]),
                             termination=rng.choice(["power_recovery", "to_hover", "touchdown"]),
                             takeover=rng.random() < 0.1, satisfactory=rng.random() < 0.8,
                             score=rng.choice([None, rng.uniform(20, 100)]), remarks="", parts={}, flags=[]))
        if state == "signed" and rng.random() < 0.2:
            # An amendment copying the attempts, signed or still a draft.
            newer_state = rng.choice(["signed", "draft"])
            superseded_signed = newer_state == "signed"
            sortie_id += 1
            sorties.append(dict(sorties[-1] | {"id": sortie_id, "version": 2, "supersedes_id": sortie_id - 1,
                                               "state": newer_state}))
            for row in list(rows):
                attempt_id += 1
                copy = dict(row | {"id": attempt_id, "sortie_id": sortie_id})
                attempts.append(copy)
                if newer_state == "signed":
                    truth.append((copy, plane, instructor))
        attempts.extend(rows)
        if state == "signed" and not superseded_signed:
            truth.extend((row, plane, instructor) for row in rows)
    with app.state.engine.begin() as conn:
        conn.execute(insert(Sortie.__table__), [s | {"supersedes_id": s.get("supersedes_id")} for s in sorties])
        conn.execute(insert(Attempt.__table__), attempts)

    rules = [
        _rule(db, name="Any, 90 days, 3", window_days=90, min_count=3, warn_days=14),
        _rule(db, name="Touchdowns with instructor", terminations=["touchdown"], with_instructor=True,
              window_days=45, min_count=2, require_satisfactory=True),
        _rule(db, name="Finch, 6 months", type_ids=[other_aircraft.type_id], window_days=None, window_months=6, min_count=2),
        _rule(db, name="Turns scoring 60, solo", maneuvers=["turn_180", "turn_360"], min_score=60,
              with_instructor=False, window_days=None, window_months=3, min_count=1, warn_days=20),
    ]
    for as_of in [start + timedelta(days=rng.randint(0, 760)) for _ in range(12)]:
        found = {(r.person_id, r.rule_id): r for r in board.standings(db, as_of=as_of, rules=rules)}
        for pilot in pilots:
            for rule in rules:
                dates = [row["flown_on"] for row, plane, instructor in truth
                         if row["pilot_id"] == pilot.id and _qualifies(rule, row, aircraft[plane], instructor)]
                expected = evaluate_currency(dates, as_of=as_of, window_days=rule.window_days,
                                             window_months=rule.window_months, min_count=rule.min_count,
                                             warn_days=rule.warn_days)
                got = found[(pilot.id, rule.id)]
                assert (got.status, got.current_until, got.qualifying_count, got.needed) == (
                    expected.status, expected.current_until, expected.qualifying_count, expected.needed
                ), (as_of, pilot.name, rule.name)


def _qualifies(rule: CurrencyRule, row: dict, type_id: int, instructor_id: int | None) -> bool:
    """The rule's conditions, written out plainly in Python for the comparison."""
    if row["takeover"]:
        return False
    if rule.maneuvers and row["maneuver"] not in rule.maneuvers:
        return False
    if rule.terminations and row["termination"] not in rule.terminations:
        return False
    if rule.type_ids and type_id not in rule.type_ids:
        return False
    aboard = instructor_id is not None and instructor_id != row["pilot_id"]
    if rule.with_instructor is not None and aboard != rule.with_instructor:
        return False
    if rule.min_score is not None and (row["score"] is None or row["score"] < rule.min_score):
        return False
    return not rule.require_satisfactory or row["satisfactory"]
