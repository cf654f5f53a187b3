"""Import benchmark: a 10,000-row file of past practice autorotations, checked and imported (issue 14).

    .venv/bin/python -m tests.benchmarks.bench_import [--rows 10000] [--format csv|xlsx]
    FLAREBOOK_BENCH_DATABASE_URL=postgresql+psycopg://... (an empty database) to run on PostgreSQL

Builds the small invented test school (tests/support.py) with a few more pilots, writes a file with
Python's csv module (or openpyxl), and times, in one run:
- the dry run (read, map, check every row), as the page's "Check the file" does;
- the import itself (sorties created, every attempt scored, each sortie signed, one batch), as
  POST /api/v1/imports with dry_run=false does, committed.
The goal is under 10 s for 10,000 rows. The load average is printed first: measure on an idle machine.
"""
import argparse
import csv
import io
import os
import random
import tempfile
import time
from datetime import date, timedelta
from pathlib import Path

from openpyxl import Workbook
from sqlalchemy import func, select

from server.db import make_engine, make_session_factory, transaction
from server.imports import service
from server.logbook.models import Attempt
from server.migrate import upgrade
from server.people import service as people
from server.people.models import Person
from server.records import audit
from tests.support import build_world
from tests.benchmarks import machine

HEADER = ["Date", "Time", "Student", "Instructor", "Registration", "Site", "Manoeuvre", "Termination",
          "Descent airspeed (kt)", "NR low (%)", "NR high (%)", "Flare height (ft)", "Touchdown speed (kt)",
          "Distance from aim point (ft)", "Grade", "Remarks"]
PILOTS = 40


def make_rows(count: int, pilots: list[str], instructors: list[str], seed: int = 14) -> list[list]:
    """Invented past attempts: about four per sortie, over the last three years."""
    rng = random.Random(seed)
    rows, start = [], date.today() - timedelta(days=3 * 365)
    while len(rows) < count:
        day = start + timedelta(days=rng.randrange(3 * 365 - 1))
        pilot, instructor, hour = rng.choice(pilots), rng.choice(instructors), rng.randrange(8, 17)
        for _ in range(rng.randint(2, 6)):
            rows.append([day.isoformat(), f"{hour:02d}:00", pilot, instructor, "TS-WRA", "Test Field",
                         rng.choice(["Straight-in", "180° turn", "360° turn"]),
                         rng.choice(["Power recovery", "Full touchdown"]), f"{rng.gauss(65, 3):.0f}",
                         f"{rng.uniform(90, 97):.0f}", f"{rng.uniform(100, 107):.0f}", f"{rng.gauss(90, 12):.0f}",
                         f"{abs(rng.gauss(3, 2)):.1f}", f"{rng.gauss(0, 60):.0f}", rng.choice(["S", "S", "U", ""]),
                         "bench"])
    return rows[:count]


def file_bytes(rows: list[list], file_format: str) -> bytes:
    if file_format == "xlsx":
        book = Workbook()
        for row in [HEADER, *rows]:
            book.active.append(row)
        out = io.BytesIO()
        book.save(out)
        return out.getvalue()
    text = io.StringIO(newline="")
    csv.writer(text).writerows([HEADER, *rows])
    return text.getvalue().encode()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=10_000)
    parser.add_argument("--format", choices=("csv", "xlsx"), default="csv")
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)
    folder = tempfile.mkdtemp(prefix="flarebook-bench-import-")
    url = os.environ.get("FLAREBOOK_BENCH_DATABASE_URL") or f"sqlite:///{Path(folder) / 'bench.sqlite3'}"
    upgrade(url)
    engine = make_engine(url)
    sessions = make_session_factory(engine)
    with transaction(sessions) as session:
        world = build_world(session)
        pilots = [world.student.email, world.other_student.email]
        for n in range(PILOTS - 2):
            pilots.append(people.create_person(session, name=f"Bench Pilot {n}", email=f"bench{n}@school.example",
                                               roles=["student"], password="bench-password-1").email)
        instructors = [world.instructor.name, world.other_instructor.name]
        chief_id = world.chief.id
    data = file_bytes(make_rows(args.rows, pilots, instructors), args.format)
    print(f"{args.rows:,} rows, {args.format}, {len(data) / 1024:,.0f} KB, database {engine.dialect.name}")

    with transaction(sessions) as session:
        began = time.perf_counter()
        checked = service.run_import(session, actor=session.get(Person, chief_id), kind="attempts", data=data,
                                     dry_run=True)
        dry = time.perf_counter() - began
    assert checked.ok == args.rows, checked.errors[:5]
    began, cpu = time.perf_counter(), time.process_time()
    with transaction(sessions) as session:
        done = service.run_import(session, actor=session.get(Person, chief_id), kind="attempts", data=data,
                                  file_name="bench.csv", dry_run=False)
    wet, wet_cpu = time.perf_counter() - began, time.process_time() - cpu
    with sessions() as session:
        stored = session.scalar(select(func.count()).select_from(Attempt))
        assert stored == args.rows and audit.verify(session).ok
    print(f"dry run (read and check every row): {dry:.2f} s")
    print(f"import ({done.created['sorties']:,} sorties, {done.created['attempts']:,} attempts, committed): "
          f"{wet:.2f} s ({wet_cpu:.2f} s of CPU in this process), {args.rows / wet:,.0f} rows/s; "
          f"import / dry run = {wet / dry:.1f}x")
    print(f"goal: under 10 s for 10,000 rows -> {'met' if wet * 10_000 / args.rows < 10 else 'not met'} "
          "(scaled to 10,000 rows)")
    engine.dispose()


if __name__ == "__main__":
    main()
