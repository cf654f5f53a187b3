"""Benchmark, run by hand: the progress file of a student with 5,000 attempts, against reading them.

    .venv/bin/python -m tests.benchmarks.bench_progress [--attempts 5000] [--repeat 15]

Builds a throw-away SQLite database (or uses FLAREBOOK_BENCH_DATABASE_URL, a fresh PostgreSQL database),
logs the invented student's sorties through the real services (scored, signed, a few amended), then
times in the same run, median of the repeats:
  - read: loading that student's attempts from the database, whole rows through the ORM, nothing else;
  - page: GET /people/{id}/progress through the app, signed in as the student (HTML, charts and all);
  - api:  GET /api/v1/people/{id}/trends for the kind with the most attempts.
The goal (issue 4): page / read <= 3. Every name and figure is invented.
"""
import argparse
import os
import random
import statistics
import tempfile
import time
from datetime import UTC, date, datetime, timedelta

from sqlalchemy import select

from server.app import create_app
from server.config import Settings
from server.logbook import service as logbook
from server.logbook.models import Attempt
from server.logbook.schemas import AttemptFields, SortieCreate
from server.migrate import upgrade
from server.people.models import Person
from server.training.models import Enrolment, Lesson, LessonRequirement, Program, Stage
from tests.conftest import sign_in
from tests.support import build_world
from tests.benchmarks import machine

KINDS = [("straight_in", "power_recovery", 4), ("straight_in", "touchdown", 4), ("turn_180", "power_recovery", 2),
         ("turn_180", "touchdown", 2), ("turn_360", "touchdown", 1), ("hovering", "to_hover", 1)]
PER_SORTIE = 5


def _attempt(rng: random.Random, skill: float) -> AttemptFields:
    maneuver, termination, _ = rng.choices(KINDS, weights=[k[2] for k in KINDS])[0]
    hovering = maneuver == "hovering"
    return AttemptFields(
        maneuver=maneuver, termination=termination, landing_dir_deg=270,
        entry_height_ft=4 if hovering else 600, entry_kias=0 if hovering else 65,
        descent_kias=None if hovering else round(65 + rng.gauss(0, 6 * (1.2 - skill))),
        nr_low_pct=None if hovering else round(rng.uniform(88, 98), 1),
        nr_high_pct=None if hovering else round(rng.uniform(100, 107), 1),
        flare_height_ft=None if hovering else max(20, round(rng.gauss(92, 8 + 30 * (1 - skill)))),
        touchdown_speed_kt=round(max(0.0, rng.gauss(2 + 8 * (1 - skill), 1.5)), 1),
        point_error_ft=round(rng.gauss(0, 40 + 150 * (1 - skill))) if termination == "touchdown" else None,
        heading_error_deg=round(rng.gauss(0, 3 + 8 * (1 - skill))),
        grade="satisfactory" if skill > 0.5 else None,
    )


def build(app, attempts: int, seed: int = 4) -> tuple[int, str]:
    """The invented test school plus one student's history, through the real services."""
    rng = random.Random(seed)
    with app.state.sessions() as session:
        world = build_world(session)
        program = Program(name="Bench syllabus (invented)", level="private")
        stage = Stage(position=1, name="Stage 1")
        for position, (maneuver, termination, _) in enumerate(KINDS, start=1):
            lesson = Lesson(position=position, name=f"{maneuver} to {termination}")
            lesson.requirements = [LessonRequirement(maneuver=maneuver, termination=termination, attempts_needed=5)]
            stage.lessons.append(lesson)
        program.stages = [stage]
        session.add(program)
        session.flush()
        sorties = attempts // PER_SORTIE
        first_day = datetime.now(UTC) - timedelta(days=sorties // 2 + 2)
        session.add(Enrolment(program_id=program.id, student_id=world.student.id,
                              instructor_id=world.instructor.id, started_on=first_day.date()))
        instructor = session.get(Person, world.instructor.id)
        session.commit()
        for n in range(sorties):
            sortie = logbook.create_sortie(session, actor=instructor, data=SortieCreate(
                flown_at=first_day + timedelta(days=n // 2, hours=2 * (n % 2)), aircraft_id=world.aircraft.id,
                pilot_id=world.student.id, site_id=world.site.id, oat_c=rng.randint(2, 30),
                altimeter_hpa=rng.randint(1000, 1030), takeoff_weight_lb=rng.randint(1250, 1400)))
            skill = min(1.0, 0.2 + 0.8 * n / sorties + rng.uniform(-0.1, 0.1))
            for _ in range(PER_SORTIE):
                logbook.add_attempt(session, actor=instructor, sortie=sortie, data=_attempt(rng, skill))
            session.flush()
            session.refresh(sortie)
            logbook.record_instructor_signature(session, actor=instructor, sortie=sortie)
            if n % 97 == 0:  # an occasional amendment: the old version stays on file and stops counting
                amended = logbook.amend_sortie(session, actor=instructor, sortie=sortie, reason="remarks added")
                logbook.record_instructor_signature(session, actor=instructor, sortie=amended)
            if n % 50 == 0:
                session.commit()
        session.commit()
        return world.student.id, world.student.email


def _median_ms(action, repeat: int) -> float:
    action()  # warm caches and templates once
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        action()
        times.append(time.perf_counter() - start)
    return statistics.median(times) * 1000


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--attempts", type=int, default=5000)
    parser.add_argument("--repeat", type=int, default=15)
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)
    with tempfile.TemporaryDirectory() as folder:
        url = os.environ.get("FLAREBOOK_BENCH_DATABASE_URL") or f"sqlite:///{folder}/bench.sqlite3"
        upgrade(url)
        app = create_app(Settings(database_url=url))
        started = time.perf_counter()
        pilot_id, email = build(app, args.attempts)
        print(f"built {args.attempts} attempts in {time.perf_counter() - started:.0f} s on {url.split(':')[0]}")

        def read_attempts():
            with app.state.sessions() as session:
                rows = session.scalars(select(Attempt).where(Attempt.pilot_id == pilot_id)
                                       .order_by(Attempt.flown_on, Attempt.sequence)).all()
                assert len(rows) >= args.attempts

        client = sign_in(app, email)
        most = max(KINDS, key=lambda k: k[2])

        def page():
            answer = client.get(f"/people/{pilot_id}/progress")
            assert answer.status_code == 200 and "Progress file" in answer.text

        def api():
            answer = client.get(f"/api/v1/people/{pilot_id}/trends?maneuver={most[0]}&termination={most[1]}")
            assert answer.status_code == 200

        read_ms = _median_ms(read_attempts, args.repeat)
        page_ms = _median_ms(page, args.repeat)
        api_ms = _median_ms(api, args.repeat)
        size = len(client.get(f"/people/{pilot_id}/progress").content)
        print(f"read the student's attempts (ORM, whole rows): {read_ms:8.1f} ms")
        print(f"progress file page, served:                   {page_ms:8.1f} ms  ({size / 1024:.0f} KiB of HTML)")
        print(f"trends API, largest kind:                     {api_ms:8.1f} ms")
        print(f"ratio page / read: {page_ms / read_ms:.2f} (goal: at most 3)")
        app.state.engine.dispose()


if __name__ == "__main__":
    main()
