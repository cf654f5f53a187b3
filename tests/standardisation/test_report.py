"""Instructor standardisation as a chief pilot reads it, on a seeded scenario.

Expected counts are worked out in the test from how each attempt was made (inside every tolerance or
not, and the grade given), following the definitions of issue 14, not from what the server stored. The
interval is checked against scipy.stats.t.interval over the stored scores.
"""
import random
from datetime import UTC, datetime, timedelta

import pytest
from scipy import stats
from sqlalchemy import select

from server.logbook import service as logbook
from server.logbook.models import Attempt
from server.logbook.schemas import AttemptFields
from server.people.models import Person
from tests.support import make_sortie

# On the invented test type: inside every default tolerance (NR 90-108 %, touchdown up to 8 kt,
# flare 70-110 ft at sea level ISA, point 200 ft, heading 10 deg) ...
INSIDE = dict(descent_kias=65, nr_low_pct=95, nr_high_pct=104, flare_height_ft=90, touchdown_speed_kt=3,
              point_error_ft=20, heading_error_deg=2)
# ... and outside one (touchdown speed over the type's 8 kt).
OUTSIDE = INSIDE | {"touchdown_speed_kt": 12}
RANGE = {"from": "2026-09-01", "to": "2026-11-30"}


def expected_outcome(grade, inside):
    """Issue 14's definitions: lenient = satisfactory though outside; strict = unsatisfactory though inside."""
    if grade is None:
        return None
    if grade == "satisfactory":
        return "agree" if inside else "lenient"
    return "strict" if inside else "agree"


def fly(db, world, *, instructor, pilot, when, attempts, sign=True):
    sortie = make_sortie(db, world, instructor=instructor, pilot=pilot, flown_at=when)
    actor = db.get(Person, instructor.id)
    for maneuver, termination, grade, inside in attempts:
        logbook.add_attempt(db, actor=actor, sortie=sortie, data=AttemptFields(
            maneuver=maneuver, termination=termination, grade=grade, **(INSIDE if inside else OUTSIDE)))
    db.flush()
    db.refresh(sortie)
    if sign:
        logbook.record_instructor_signature(db, actor=actor, sortie=sortie)
    db.commit()
    return sortie


@pytest.fixture
def scenario(db, world):
    """Seeded: Ivo flies straight-ins and 180s, Olga straight-ins only; drafts and amendments mixed in."""
    rng = random.Random(14)
    expected = {world.instructor.id: [], world.other_instructor.id: []}
    cells = {world.instructor.id: [("straight_in", "touchdown"), ("turn_180", "touchdown")],
             world.other_instructor.id: [("straight_in", "touchdown")]}
    start = datetime(2026, 9, 3, 9, tzinfo=UTC)
    for day in range(24):
        for instructor, pilot in ((world.instructor, world.student), (world.other_instructor, world.other_student)):
            rows = []
            for _ in range(rng.randint(1, 4)):
                maneuver, termination = rng.choice(cells[instructor.id])
                grade = rng.choice(["satisfactory", "satisfactory", "unsatisfactory", None])
                inside = rng.random() < 0.6
                rows.append((maneuver, termination, grade, inside))
            signed = day % 7 != 3  # every seventh sortie stays a draft and must not count
            fly(db, world, instructor=instructor, pilot=pilot, when=start + timedelta(days=3 * day), attempts=rows,
                sign=signed)
            if signed:
                expected[instructor.id].extend(rows)
    # Out of the period: must not count.
    fly(db, world, instructor=world.instructor, pilot=world.student, when=datetime(2026, 8, 1, 9, tzinfo=UTC),
        attempts=[("straight_in", "touchdown", "satisfactory", False)] * 5)
    return expected


def counts(rows, keep=lambda row: True):
    kept = [r for r in rows if keep(r)]
    outcomes = [expected_outcome(grade, inside) for _, _, grade, inside in kept]
    return {"attempts": len(kept), "graded": sum(o is not None for o in outcomes),
            "agree": outcomes.count("agree"), "lenient": outcomes.count("lenient"),
            "strict": outcomes.count("strict")}


def figures(row):
    return {key: row[key] for key in ("attempts", "graded", "agree", "lenient", "strict")}


def test_counts_match_the_scenario_counted_independently(chief_client, world, scenario):
    body = chief_client.get("/api/v1/standardisation", params=RANGE).json()
    assert body["from"] == "2026-09-01" and body["to"] == "2026-11-30"
    rows = {row["instructor_id"]: row for row in body["rows"]}
    assert set(rows) == set(scenario)
    for instructor_id, made in scenario.items():
        assert figures(rows[instructor_id]) == counts(made)
        row = rows[instructor_id]
        assert row["lenient_pct"] == pytest.approx(round(100 * row["lenient"] / row["graded"], 1))
        assert row["agreement_pct"] == pytest.approx(round(100 * row["agree"] / row["graded"], 1))
        assert row["strict_pct"] == pytest.approx(round(100 * row["strict"] / row["graded"], 1))
    everyone = [r for made in scenario.values() for r in made]
    assert figures(body["school"]) == counts(everyone)


def test_one_maneuver_narrows_every_figure(chief_client, world, scenario):
    body = chief_client.get("/api/v1/standardisation", params=RANGE | {"maneuver": "turn_180"}).json()
    rows = {row["instructor_id"]: row for row in body["rows"]}
    assert set(rows) == {world.instructor.id}  # Olga flew no 180s
    assert figures(rows[world.instructor.id]) == counts(scenario[world.instructor.id], lambda r: r[0] == "turn_180")


def test_empty_filters_mean_every_kind(chief_client, world, scenario):
    """The contract's own example sends maneuver= and termination= empty."""
    body = chief_client.get("/api/v1/standardisation", params=RANGE | {"maneuver": "", "termination": ""}).json()
    assert figures(body["school"]) == counts([r for made in scenario.values() for r in made])
    assert chief_client.get("/standardisation", params=RANGE | {"maneuver": "", "termination": ""}).status_code == 200


def test_shared_figures_keep_to_the_kinds_both_teach(chief_client, world, scenario):
    body = chief_client.get("/api/v1/standardisation", params=RANGE).json()
    ivo = next(r for r in body["rows"] if r["instructor_id"] == world.instructor.id)
    assert ivo["shared_cells"] == [{"maneuver": "straight_in", "termination": "touchdown", "level": "default"}]
    straight = lambda r: r[0] == "straight_in"  # noqa: E731
    assert figures(ivo["shared"]) == counts(scenario[world.instructor.id], straight)
    assert figures(ivo["peers_shared"]) == counts(scenario[world.other_instructor.id], straight)


def test_mean_score_interval_matches_scipy(chief_client, db, world, scenario):
    body = chief_client.get("/api/v1/standardisation", params=RANGE).json()
    ivo = next(r for r in body["rows"] if r["instructor_id"] == world.instructor.id)
    scores = [a.score for a in db.scalars(select(Attempt).join(Attempt.sortie).where(
        Attempt.flown_on >= datetime(2026, 9, 1).date(), Attempt.pilot_id == world.student.id))
        if a.sortie.state == "signed" and a.score is not None]
    mean = sum(scores) / len(scores)
    low, high = stats.t.interval(0.95, len(scores) - 1, loc=mean, scale=stats.sem(scores))  # scipy.stats.t
    assert ivo["mean_score"] == pytest.approx(mean, abs=0.05)
    assert ivo["mean_score_ci95"] == [pytest.approx(low, abs=0.05), pytest.approx(high, abs=0.05)]


def test_too_few_to_judge_below_twenty_graded(chief_client, db, world):
    fly(db, world, instructor=world.instructor, pilot=world.student, when=datetime(2026, 11, 2, 9, tzinfo=UTC),
        attempts=[("straight_in", "touchdown", "satisfactory", True)] * 19)
    body = chief_client.get("/api/v1/standardisation", params=RANGE).json()
    assert body["rows"][0]["graded"] == 19
    assert body["rows"][0]["enough_to_judge"] is False
    assert "Too few to judge" in body["rows"][0]["note"]
    fly(db, world, instructor=world.instructor, pilot=world.student, when=datetime(2026, 11, 3, 9, tzinfo=UTC),
        attempts=[("straight_in", "touchdown", "satisfactory", True)])
    body = chief_client.get("/api/v1/standardisation", params=RANGE).json()
    assert body["rows"][0]["enough_to_judge"] is True and body["rows"][0]["note"] is None


def test_an_amendment_counts_once(chief_client, db, world):
    """The signed amendment replaces the version it amends (the counted-sorties rule)."""
    first = fly(db, world, instructor=world.instructor, pilot=world.student,
                when=datetime(2026, 10, 2, 9, tzinfo=UTC), attempts=[("straight_in", "touchdown", "satisfactory", False)])
    actor = db.get(Person, world.instructor.id)
    amended = logbook.amend_sortie(db, actor=actor, sortie=first, reason="touchdown speed re-read")
    db.commit()
    body = chief_client.get("/api/v1/standardisation", params=RANGE).json()
    assert body["school"]["lenient"] == 1 and body["school"]["attempts"] == 1  # the draft amendment: old counts
    attempt = amended.attempts[0]
    logbook.update_attempt(db, actor=actor, attempt=attempt, data=AttemptFields(
        maneuver="straight_in", termination="touchdown", grade="satisfactory", **INSIDE))
    db.flush()
    logbook.record_instructor_signature(db, actor=actor, sortie=amended)
    db.commit()
    body = chief_client.get("/api/v1/standardisation", params=RANGE).json()
    assert (body["school"]["attempts"], body["school"]["agree"], body["school"]["lenient"]) == (1, 1, 0)


def test_each_figure_opens_its_attempts(chief_client, world, scenario):
    params = RANGE | {"instructor_id": world.other_instructor.id, "show": "lenient"}
    listed = chief_client.get("/api/v1/standardisation/attempts", params=params).json()["attempts"]
    assert len(listed) == counts(scenario[world.other_instructor.id])["lenient"]
    assert {a["outcome"] for a in listed} == {"lenient"}
    assert {a["instructor_id"] for a in listed} == {world.other_instructor.id}
    page = chief_client.get("/standardisation", params=RANGE)
    assert page.status_code == 200
    assert "/standardisation/attempts?" in page.text and "<svg" in page.text
    html = chief_client.get("/standardisation/attempts", params=params).text
    assert html.count("outcome-lenient") == len(listed)


def test_empty_period_and_bad_range(chief_client):
    body = chief_client.get("/api/v1/standardisation", params={"from": "2020-01-01", "to": "2020-02-01"}).json()
    assert body["rows"] == [] and body["school"]["attempts"] == 0 and body["school"]["mean_score"] is None
    bad = chief_client.get("/api/v1/standardisation", params={"from": "2026-02-01", "to": "2026-01-01"})
    assert bad.status_code == 422 and "after its end" in bad.text


def test_only_chief_pilots_and_admins(instructor_client, student_client):
    assert instructor_client.get("/api/v1/standardisation").status_code == 403
    assert student_client.get("/api/v1/standardisation").status_code == 403
    assert instructor_client.get("/standardisation").status_code == 403
