"""Today's board cells, kept between boards and brought up to date from the kept rows written since
(`server/currency/today_cells.py`): what the chief pilot sees follows the database, even when a write
arrives in a way the rows-written-since read cannot see. Runs on SQLite and, with
FLAREBOOK_TEST_DATABASE_URL, on PostgreSQL.

The statuses checked are facts of the rule's arithmetic (common practice: two qualifying flights inside
the window make a "two in 30 days" rule current until the older one is 30 days old).
"""
from dataclasses import astuple
from datetime import UTC, datetime, timedelta

from sqlalchemy import delete

from server.currency import board, kept
from server.currency import service as rules_service
from server.currency.models import KeptStanding
from server.currency.schemas import RuleCreate
from server.people import service as people
from server.people.models import Person
from tests.support import make_sortie


def _sign(db, world, days_ago: int) -> None:
    make_sortie(db, world, attempts=1, sign=True, flown_at=datetime.now(UTC) - timedelta(days=days_ago))


def _student_cell(db, world, rule_id: int):
    today = people.school_today(db)
    shown = [s for s in board.standings(db, as_of=today) if s.person_id == world.student.id and s.rule_id == rule_id]
    evaluated = [s for s in board.evaluated_standings(db, as_of=today, rules=rules_service.list_rules(db))
                 if s.person_id == world.student.id and s.rule_id == rule_id]
    return shown, evaluated


def _two_in_thirty(db):
    return rules_service.create_rule(db, actor=db.get(Person, 1), data=RuleCreate(
        name="Students: two in 30 days", applies_to_roles=["student"], window_days=30, min_count=2,
        require_satisfactory=False))


def test_a_signature_whose_rows_were_written_long_before_its_commit_still_reaches_the_board(db, world, monkeypatch):
    """A writer whose clock is behind, or whose transaction stayed open past the margin, writes rows older
    than the last board's read: the count and checksum of every row catch it, and the board is made afresh."""
    rule = _two_in_thirty(db)
    db.commit()
    _sign(db, world, days_ago=10)
    (before,), _ = _student_cell(db, world, rule.id)  # the board is made, and its cells kept
    assert before.status != "current" and before.qualifying_count == 1
    an_hour_ago = kept.written_now_us() - 3_600_000_000
    monkeypatch.setattr(kept, "written_now_us", lambda: an_hour_ago)
    _sign(db, world, days_ago=4)
    shown, evaluated = _student_cell(db, world, rule.id)
    assert shown[0].status == "current" and shown[0].qualifying_count == 2
    assert shown[0].current_until == people.school_today(db) - timedelta(days=10) + timedelta(days=30)
    assert [astuple(s) for s in shown] == [astuple(s) for s in evaluated]


def test_a_signature_reaches_a_board_kept_from_before_it(db, world):
    rule = _two_in_thirty(db)
    db.commit()
    _sign(db, world, days_ago=12)
    _student_cell(db, world, rule.id)
    _sign(db, world, days_ago=2)
    shown, evaluated = _student_cell(db, world, rule.id)
    assert shown[0].status == "current" and [astuple(s) for s in shown] == [astuple(s) for s in evaluated]


def test_a_kept_row_gone_from_the_database_goes_from_the_board(db, world):
    """As after a backup restored from before the row was written: the board shows the database's rows,
    not the cells this process kept."""
    rule = _two_in_thirty(db)
    db.commit()
    shown, _ = _student_cell(db, world, rule.id)
    assert len(shown) == 1
    db.execute(delete(KeptStanding).where(KeptStanding.pilot_id == world.student.id, KeptStanding.rule_id == rule.id))
    db.commit()
    shown, _ = _student_cell(db, world, rule.id)
    assert shown == []
