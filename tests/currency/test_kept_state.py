"""The readiness board's kept state against a full evaluation, on seeded random records made through the services.

Each step of a seeded random walk signs a sortie, amends one (attempts removed, changed or added, then
signed), adds, edits or removes a rule, changes someone's roles or active flag, adds a person, or moves
an aircraft to another type; after each, `flarebook currency verify`'s check finds no difference, and
the board read from the kept rows, today (from the cells of the step before and the rows written since)
and on later days, equals the set-wise evaluation of those days. Runs on
SQLite and, with FLAREBOOK_TEST_DATABASE_URL, on PostgreSQL.
"""
import random
import subprocess
import sys
import threading
from concurrent.futures import ThreadPoolExecutor
from dataclasses import astuple
from datetime import UTC, datetime, timedelta

import pytest
from sqlalchemy import select, update

from server.config import PROJECT_ROOT
from server.db import transaction
from server.currency import board, kept, kept_check
from server.currency import service as rules_service
from server.currency.models import KeptStanding
from server.currency.schemas import RuleCreate
from server.fleet import service as fleet
from server.fleet.models import Aircraft
from server.fleet.schemas import AircraftCreate
from server.logbook import hooks as logbook_hooks
from server.logbook import service as logbook
from server.logbook.models import Sortie
from server.logbook.schemas import AttemptFields, SortieCreate
from server.people import service as people
from server.people.models import Person
from tests.support import PASSWORD, add_second_type

MANEUVERS = ["straight_in", "turn_180", "turn_360", "hovering"]
TERMINATIONS = ["power_recovery", "to_hover", "touchdown"]
ROLE_SETS = [["student"], ["instructor"], ["student", "instructor"], ["chief_pilot", "instructor"], ["admin"]]


def _attempt(rng: random.Random) -> AttemptFields:
    """Figures spread so that some attempts score well and some are outside the tolerances."""
    return AttemptFields(maneuver=rng.choice(MANEUVERS), termination=rng.choice(TERMINATIONS), descent_kias=65,
                         nr_low_pct=rng.uniform(88, 98), nr_high_pct=rng.uniform(100, 110),
                         flare_height_ft=rng.uniform(50, 130), touchdown_speed_kt=rng.uniform(0, 12),
                         point_error_ft=rng.uniform(-150, 150), heading_error_deg=rng.uniform(-10, 10),
                         takeover=rng.random() < 0.08)


def _rule_data(rng: random.Random, type_ids: list[int], people_ids: list[int]) -> RuleCreate:
    window = {"window_days": rng.choice([7, 30, 90, 400])} if rng.random() < 0.6 else {
        "window_months": rng.choice([1, 3, 6, 24])}
    return RuleCreate(
        name=f"Rule {rng.randint(1, 10_000)}",
        applies_to_roles=rng.sample(["student", "instructor", "chief_pilot"], rng.randint(0, 2)),
        applies_to_people=rng.sample(people_ids, 1) if rng.random() < 0.2 else [],
        maneuvers=rng.sample(MANEUVERS, rng.randint(0, 2)), terminations=rng.sample(TERMINATIONS, rng.randint(0, 2)),
        type_ids=rng.sample(type_ids, 1) if rng.random() < 0.3 else [],
        with_instructor=rng.choice([None, None, True, False]),
        min_score=rng.choice([None, None, 50.0, 80.0]), require_satisfactory=rng.random() < 0.5,
        min_count=rng.choice([1, 1, 2, 3, 5]), warn_days=rng.choice([0, 7, 14, 45]), **window)


def _assert_kept_matches(db, today):
    assert kept_check.differences(db) == []
    rules = rules_service.list_rules(db)
    # Today's board: the cells kept from the step before, brought up to date from the rows written since.
    assert [astuple(s) for s in board.standings(db, as_of=today)] == [
        astuple(s) for s in board.evaluated_standings(db, as_of=today, rules=rules)]
    # Days ahead: facts still holding, counts that dropped a date (read from the kept dates), a sortie dated ahead.
    for ahead in (1, 9, 31, 95, 200, 800):
        day = today + timedelta(days=ahead)
        from_kept = board.kept_standings(db, as_of=day, rules=rules)
        evaluated = board.evaluated_standings(db, as_of=day, rules=rules)
        assert [astuple(s) for s in from_kept] == [astuple(s) for s in evaluated], day


def test_kept_state_follows_every_change_on_random_records(db, world):
    rng = random.Random(20261202)
    chief = db.get(Person, world.chief.id)
    second = add_second_type(db)
    type_ids = [world.helicopter.id, second.type_id]
    instructors = [db.get(Person, world.instructor.id), db.get(Person, world.other_instructor.id), chief]
    changeable = [db.get(Person, p.id) for p in (world.student, world.other_student)]
    changeable.append(people.create_person(db, name="Nell Newpilot", email="nell@school.example",
                                           roles=["student"], password=PASSWORD))
    pilots = instructors + changeable
    aircraft = [world.aircraft.id, second.id]
    today = people.school_today(db)
    for _ in range(3):
        rules_service.create_rule(db, actor=chief, data=_rule_data(rng, type_ids, [p.id for p in pilots]))
    db.commit()
    _assert_kept_matches(db, today)

    signed: list[Sortie] = []
    kinds = ["sign"] * 8 + ["amend"] * 3 + ["rule_add", "rule_edit", "rule_remove", "roles", "active",
                                             "person", "retype"]
    for step in range(70):
        kind = rng.choice(kinds)
        if kind == "sign":
            pilot = rng.choice([p for p in pilots if p.active])
            instructor = rng.choice(instructors)
            # Mostly the past; now and then a flight later today in UTC, whose local date may be tomorrow.
            flown_at = datetime.now(UTC) - timedelta(days=rng.randint(0, 900), hours=rng.randint(0, 23))
            if rng.random() < 0.1:
                flown_at = datetime.now(UTC) + timedelta(hours=rng.randint(1, 20))
            sortie = logbook.create_sortie(db, actor=chief, data=SortieCreate(
                flown_at=flown_at, aircraft_id=rng.choice(aircraft), pilot_id=pilot.id, site_id=world.site.id,
                instructor_id=instructor.id if rng.random() < 0.8 else chief.id, oat_c=15, altimeter_hpa=1013.25))
            for _ in range(rng.randint(1, 4)):
                logbook.add_attempt(db, actor=chief, sortie=sortie, data=_attempt(rng))
            db.flush()
            db.refresh(sortie)
            if rng.random() < 0.85:  # some stay drafts, which never count
                logbook.record_instructor_signature(db, actor=chief, sortie=sortie)
                signed.append(sortie)
        elif kind == "amend" and signed:
            original = rng.choice(signed)
            signed.remove(original)
            amendment = logbook.amend_sortie(db, actor=chief, sortie=original, reason="figures checked again")
            db.flush()
            db.refresh(amendment)
            for attempt in list(amendment.attempts):
                roll = rng.random()
                if roll < 0.3 and len(amendment.attempts) > 1:
                    logbook.delete_attempt(db, actor=chief, attempt=attempt)
                elif roll < 0.6:
                    logbook.update_attempt(db, actor=chief, attempt=attempt, data=_attempt(rng))
            if rng.random() < 0.4:
                logbook.add_attempt(db, actor=chief, sortie=amendment, data=_attempt(rng))
            db.flush()
            db.refresh(amendment)
            if rng.random() < 0.8:  # a draft amendment leaves the signed original counting
                logbook.record_instructor_signature(db, actor=chief, sortie=amendment)
                signed.append(amendment)
            else:
                signed.append(original)
        elif kind == "rule_add":
            rules_service.create_rule(db, actor=chief, data=_rule_data(rng, type_ids, [p.id for p in pilots]))
        elif kind in ("rule_edit", "rule_remove") and rules_service.list_rules(db):
            rule = rng.choice(rules_service.list_rules(db))
            if kind == "rule_edit":
                rules_service.update_rule(db, actor=chief, rule=rule,
                                          data=_rule_data(rng, type_ids, [p.id for p in pilots]))
            else:
                rules_service.delete_rule(db, actor=chief, rule=rule)
        elif kind == "roles":
            people.update_person(db, person=rng.choice(changeable), actor=chief, roles=rng.choice(ROLE_SETS))
        elif kind == "active":
            person = rng.choice(changeable)
            people.update_person(db, person=person, actor=chief, active=not person.active)
        elif kind == "person":
            made = people.create_person(db, name=f"Pat Pilot {step}", email=f"pat{step}@school.example",
                                        roles=rng.choice(ROLE_SETS), password=PASSWORD)
            changeable.append(made)
            pilots.append(made)
        elif kind == "retype":
            row = db.get(Aircraft, rng.choice(aircraft))
            fleet.update_aircraft(db, row=row, actor=chief, data=AircraftCreate(
                registration=row.registration, type_id=rng.choice(type_ids)))
        db.commit()
        _assert_kept_matches(db, today)
    # The walk did reach the board: kept rows of several rules, and pilots current, lapsed and never done.
    statuses = {s.status for s in board.standings(db, as_of=today)}
    assert db.scalar(select(KeptStanding.rule_id).limit(1)) is not None
    assert {"current", "never"} <= statuses or {"due_soon", "never"} <= statuses, statuses


def test_verify_names_the_pilot_and_rule_of_a_tampered_row(db, world):
    chief = db.get(Person, world.chief.id)
    rule = rules_service.create_rule(db, actor=chief, data=RuleCreate(
        name="Any autorotation, 30 days", applies_to_roles=["student"], window_days=30, min_count=1,
        require_satisfactory=False))
    sortie = logbook.create_sortie(db, actor=chief, data=SortieCreate(
        flown_at=datetime.now(UTC) - timedelta(days=3), aircraft_id=world.aircraft.id, pilot_id=world.student.id,
        site_id=world.site.id, instructor_id=world.instructor.id, oat_c=15, altimeter_hpa=1013.25))
    logbook.add_attempt(db, actor=chief, sortie=sortie, data=AttemptFields(maneuver="straight_in",
                                                                          termination="touchdown"))
    db.flush()
    db.refresh(sortie)
    logbook.record_instructor_signature(db, actor=chief, sortie=sortie)
    db.commit()
    assert kept_check.differences(db) == []
    (row,) = db.scalars(select(KeptStanding).where(KeptStanding.pilot_id == world.student.id,
                                                    KeptStanding.rule_id == rule.id))
    assert row.current_until == people.school_today(db) - timedelta(days=3) + timedelta(days=30)
    db.execute(update(KeptStanding).where(KeptStanding.pilot_id == world.student.id)
               .values(current_until=row.current_until + timedelta(days=60)))
    db.commit()
    found = kept_check.differences(db)
    assert found and {(d.pilot_id, d.rule_id) for d in found} == {(world.student.id, rule.id)}
    assert kept.rebuild(db) > 0
    assert kept_check.differences(db) == []


@pytest.mark.parametrize("entry", ["server.app", "server.cli", "server.demo", "server.models"])
def test_every_process_that_signs_keeps_the_board_state(entry):
    """Each way in, imported alone in a fresh interpreter, has the kept state's hooks in place."""
    check = (f"import {entry}; from server.logbook import hooks as l; from server.people import hooks as p; "
             "from server.fleet import hooks as f; from server.currency import kept; "
             "assert kept.after_signing in l.AFTER_SIGNING and kept.after_person_change in p.AFTER_PERSON_CHANGE "
             "and kept.after_aircraft_retyped in f.AFTER_AIRCRAFT_RETYPED")
    done = subprocess.run([sys.executable, "-c", check], cwd=PROJECT_ROOT, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr


def test_two_signings_for_one_pilot_at_once_both_reach_the_kept_state(app, db, world, monkeypatch):
    """Two app processes signing the same pilot's sorties at the same moment: each signing reads the
    pilot's kept rows and rewrites them, so without taking turns the later write drops the earlier's
    dates (a lost update; PostgreSQL's READ COMMITTED allows it). The test holds both transactions open
    after the kept rows are written, as two processes would overlap, then checks the state."""
    chief = db.get(Person, world.chief.id)
    rules_service.create_rule(db, actor=chief, data=RuleCreate(
        name="Students: four in 90 days", applies_to_roles=["student"], window_days=90, min_count=4))
    drafts = []
    for days_ago in (3, 5):
        sortie = logbook.create_sortie(db, actor=chief, data=SortieCreate(
            flown_at=datetime.now(UTC) - timedelta(days=days_ago), aircraft_id=world.aircraft.id,
            pilot_id=world.student.id, site_id=world.site.id, instructor_id=chief.id, oat_c=15,
            altimeter_hpa=1013.25))
        logbook.add_attempt(db, actor=chief, sortie=sortie, data=AttemptFields(
            maneuver="straight_in", termination="power_recovery", grade="satisfactory"))
        drafts.append(sortie.id)
    db.commit()
    both_written = threading.Barrier(2)

    def hold_open(session, sorties):  # after kept's own hook: both have written, neither committed
        try:
            both_written.wait(timeout=3)
        except threading.BrokenBarrierError:
            pass  # the other is waiting its turn, as it should

    monkeypatch.setattr(logbook_hooks, "AFTER_SIGNING", [*logbook_hooks.AFTER_SIGNING, hold_open])

    def sign(sortie_id):
        with transaction(app.state.sessions) as session:
            logbook.record_instructor_signature(session, actor=session.get(Person, chief.id),
                                                sortie=session.get(Sortie, sortie_id))

    with ThreadPoolExecutor(max_workers=2) as pool:
        for done in [pool.submit(sign, sortie_id) for sortie_id in drafts]:
            done.result()
    db.expire_all()
    assert kept_check.differences(db) == []
    row = db.scalar(select(KeptStanding).where(KeptStanding.pilot_id == world.student.id))
    assert len(row.dates) == 2, "both signed sorties count toward the student's rule"
