"""Instructor standardisation: each instructor's grades against the computed outcomes of signed attempts.

Only attempts of counted sorties (signed, the standing version) count, and only where the person was
the sortie's instructor. The fair comparison ("shared") restricts an instructor's attempts to the
cells (kind of autorotation and program level) another instructor also has in the period, and sets
beside them the other instructors' attempts in the same cells.
"""
from collections import defaultdict
from dataclasses import dataclass, field
from datetime import date, timedelta

from sqlalchemy import select
from sqlalchemy.orm import Session, selectinload

from server.compute.standardisation import (
    OUTCOMES,
    GradedAttempt,
    Tally,
    outcome,
    shared_cells,
    tally,
)
from server.errors import Invalid
from server.logbook.models import Attempt, Sortie
from server.people.models import Person
from server.logbook.counted import counted_sorties_clause
from server.people.service import school_today
from server.training.models import Standard

DEFAULT_DAYS = 365
NO_LEVEL = "default"  # attempts scored with the school's default tolerances (no standard set)
MAX_LISTED = 500
# What a list of attempts behind a figure can be narrowed to.
SHOWS = ("attempts", "graded", *OUTCOMES)


@dataclass(frozen=True)
class Row:
    """One attempt as standardisation reads it."""

    attempt_id: int
    instructor_id: int
    maneuver: str
    termination: str
    level: str
    flown_on: date
    graded: GradedAttempt

    @property
    def cell(self) -> tuple[str, str, str]:
        return (self.maneuver, self.termination, self.level)


@dataclass
class InstructorFigures:
    instructor_id: int
    name: str
    all: Tally
    shared: Tally  # on the cells this instructor shares with another
    peers_shared: Tally  # the other instructors on those same cells
    shared_cells: list[tuple[str, str, str]] = field(default_factory=list)


@dataclass
class Report:
    date_from: date
    date_to: date
    maneuver: str | None
    termination: str | None
    school: Tally
    rows: list[InstructorFigures]


def date_range(session: Session, *, date_from: date | None, date_to: date | None) -> tuple[date, date]:
    """The range asked for; by default the twelve months up to today at the school."""
    date_to = date_to or school_today(session)
    date_from = date_from or date_to - timedelta(days=DEFAULT_DAYS)
    if date_from > date_to:
        raise Invalid("The start of the period must not be after its end.")
    return date_from, date_to


def _statement(*, date_from: date, date_to: date, maneuver: str | None, termination: str | None):
    query = (
        select(Attempt.id, Sortie.instructor_id, Attempt.maneuver, Attempt.termination, Standard.level,
               Attempt.grade, Attempt.within_tolerances, Attempt.score, Attempt.takeover, Attempt.flown_on)
        .join(Sortie, Sortie.id == Attempt.sortie_id)
        .outerjoin(Standard, Standard.id == Attempt.standard_id)
        .where(counted_sorties_clause(), Sortie.instructor_id.is_not(None),
               Attempt.flown_on >= date_from, Attempt.flown_on <= date_to)
    )
    if maneuver:
        query = query.where(Attempt.maneuver == maneuver)
    if termination:
        query = query.where(Attempt.termination == termination)
    return query


def read_rows(session: Session, *, date_from: date, date_to: date, maneuver: str | None = None,
              termination: str | None = None) -> list[Row]:
    """Every counted attempt with an instructor in the period, as plain rows."""
    statement = _statement(date_from=date_from, date_to=date_to, maneuver=maneuver, termination=termination)
    return [
        Row(attempt_id=r[0], instructor_id=r[1], maneuver=r[2], termination=r[3], level=r[4] or NO_LEVEL, flown_on=r[9],
            graded=GradedAttempt(grade=r[5], within_tolerances=bool(r[6]), score=r[7], takeover=bool(r[8])))
        for r in session.execute(statement)
    ]


def report(session: Session, *, date_from: date | None = None, date_to: date | None = None,
           maneuver: str | None = None, termination: str | None = None) -> Report:
    """The school's and each instructor's figures, overall and on the cells they share."""
    date_from, date_to = date_range(session, date_from=date_from, date_to=date_to)
    rows = read_rows(session, date_from=date_from, date_to=date_to, maneuver=maneuver, termination=termination)
    by_instructor: dict[int, list[Row]] = defaultdict(list)
    for row in rows:
        by_instructor[row.instructor_id].append(row)
    shared = shared_cells({i: [r.cell for r in rs] for i, rs in by_instructor.items()})
    names = dict(session.execute(select(Person.id, Person.name).where(Person.id.in_(by_instructor))).all())
    figures = []
    for instructor_id, own in by_instructor.items():
        cells = shared[instructor_id]
        figures.append(InstructorFigures(
            instructor_id=instructor_id, name=names.get(instructor_id, f"#{instructor_id}"),
            all=tally(r.graded for r in own),
            shared=tally(r.graded for r in own if r.cell in cells),
            peers_shared=tally(r.graded for r in rows if r.instructor_id != instructor_id and r.cell in cells),
            shared_cells=sorted(cells),
        ))
    figures.sort(key=lambda f: f.name.lower())
    return Report(date_from=date_from, date_to=date_to, maneuver=maneuver, termination=termination,
                  school=tally(r.graded for r in rows), rows=figures)


def _matches(row: Row, show: str) -> bool:
    if show == "attempts":
        return True
    kind = outcome(row.graded)
    if show == "graded":
        return kind is not None
    return kind == show


def attempts_behind(session: Session, *, instructor_id: int | None, show: str, scope: str = "all",
                    date_from: date | None = None, date_to: date | None = None, maneuver: str | None = None,
                    termination: str | None = None) -> tuple[list[Attempt], bool, tuple[date, date]]:
    """The attempts one figure counts (newest first, at most MAX_LISTED) and whether more were left out.

    `instructor_id` None means the whole school; `scope` "shared" keeps the instructor's shared cells,
    "peers" the other instructors' attempts on those cells.
    """
    if show not in SHOWS:
        raise Invalid(f"Show one of: {', '.join(SHOWS)}.")
    if scope not in ("all", "shared", "peers") or (scope != "all" and instructor_id is None):
        raise Invalid("The scope is all, shared or peers, and shared and peers need an instructor.")
    date_from, date_to = date_range(session, date_from=date_from, date_to=date_to)
    rows = read_rows(session, date_from=date_from, date_to=date_to, maneuver=maneuver, termination=termination)
    if scope != "all":
        cells_by = defaultdict(set)
        for row in rows:
            cells_by[row.instructor_id].add(row.cell)
        cells = shared_cells(cells_by).get(instructor_id, set())
        rows = [r for r in rows if r.cell in cells
                and ((r.instructor_id == instructor_id) == (scope == "shared"))]
    elif instructor_id is not None:
        rows = [r for r in rows if r.instructor_id == instructor_id]
    matching = sorted((r for r in rows if _matches(r, show)), key=lambda r: (r.flown_on, r.attempt_id), reverse=True)
    if not matching:
        return [], False, (date_from, date_to)
    ids = [r.attempt_id for r in matching[:MAX_LISTED]]
    query = (select(Attempt).where(Attempt.id.in_(ids))
             .options(selectinload(Attempt.sortie))
             .order_by(Attempt.flown_on.desc(), Attempt.id.desc()))
    return list(session.scalars(query)), len(matching) > MAX_LISTED, (date_from, date_to)


def instructor_name(session: Session, instructor_id: int | None) -> str | None:
    if instructor_id is None:
        return None
    person = session.get(Person, instructor_id)
    return person.name if person else None


def graded_of(attempt: Attempt) -> GradedAttempt:
    return GradedAttempt(grade=attempt.grade, within_tolerances=attempt.within_tolerances, score=attempt.score,
                         takeover=attempt.takeover)


def outcome_of(attempt: Attempt) -> str | None:
    """agree, lenient, strict or None, for one attempt as stored."""
    return outcome(graded_of(attempt))
