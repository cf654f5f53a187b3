"""Safety digest benchmark: the set-wise SQL digest against reading the rows and counting in Python.

    .venv/bin/python -m tests.benchmarks.bench_safety_digest [--attempts 100000] [--repeat 7]
    FLAREBOOK_BENCH_DATABASE_URL=postgresql+psycopg://... (an empty database) to run on PostgreSQL

Builds the invented bench school (tests/benchmarks/school_generator.py), gives its sorties density
altitudes and about 12 % of its attempts flags, then times, median of --repeat, for one year:
- the digest as the page computes it (server.safety.service.digest: grouped SQL, JSON table function);
- the plain alternative: read every counted attempt's flags and the sortie's groups, count in Python;
- the attempts behind one figure (the busiest instructor's takeovers).
Both ways must agree to the attempt, or the script stops.
"""
import argparse
import math
import os
import random
import statistics
import tempfile
import time
from collections import Counter, defaultdict
from datetime import date
from pathlib import Path

from sqlalchemy import select, update
from sqlalchemy.orm import aliased

from server.db import make_engine, make_session_factory
from server.logbook.models import Attempt, Sortie
from server.migrate import upgrade
from server.safety import service as safety
from tests.benchmarks.school_generator import build_school
from tests.benchmarks import machine

DATE_FROM, DATE_TO = date(2025, 12, 1), date(2026, 11, 30)
FLAG_SHARE = 0.12


def add_flags_and_altitudes(sessions, seed: int = 7) -> int:
    """Density altitudes for every sortie, flags for some attempts; returns the attempts flagged."""
    rng = random.Random(seed)
    with sessions() as conn, conn.begin():  # ORM bulk UPDATE by primary key
        sortie_ids = list(conn.scalars(select(Sortie.id)))
        conn.execute(update(Sortie), [{"id": i, "density_altitude_ft": rng.uniform(-1500, 9500)} for i in sortie_ids])
        attempt_ids = list(conn.scalars(select(Attempt.id)))
        rows = []
        for attempt_id in attempt_ids:
            if rng.random() < FLAG_SHARE:
                codes = rng.sample(safety.FLAG_CODES, rng.choice((1, 1, 1, 2)))
                rows.append({"id": attempt_id, "flags": [{"code": c, "message": f"bench {c}"} for c in codes]})
        conn.execute(update(Attempt), rows)
    return len(rows)


def digest_in_python(session) -> dict:
    """The same counts, by reading every counted attempt's row and counting in Python."""
    newer = aliased(Sortie)
    replaced = select(newer.id).where(newer.supersedes_id == Sortie.id, newer.state == "signed").exists()
    rows = session.execute(
        select(Attempt.id, Attempt.flags, Sortie.instructor_id, Sortie.aircraft_id, Sortie.site_id,
               Sortie.density_altitude_ft, Attempt.flown_on)
        .join(Sortie, Attempt.sortie_id == Sortie.id)
        .where(Sortie.state == "signed", ~replaced, Attempt.flown_on >= DATE_FROM, Attempt.flown_on <= DATE_TO)
    ).all()
    tables = {name: defaultdict(Counter) for name in safety.DIMENSIONS}
    for _, flags, instructor, aircraft, site, altitude, flown_on in rows:
        keys = {
            "instructor": str(instructor) if instructor is not None else "none",
            "aircraft": str(aircraft), "site": str(site),
            "da_band": str(math.floor(altitude / 1000) * 1000) if altitude is not None else "none",
            "month": flown_on.strftime("%Y-%m"),
        }
        codes = {f["code"] for f in flags or []} & set(safety.FLAG_CODES)
        for name, key in keys.items():
            counter = tables[name][key]
            counter["attempts"] += 1
            counter.update(codes)
            counter["any"] += bool(codes)
    return tables


def median_ms(action, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        action()
        times.append((time.perf_counter() - start) * 1000)
    return statistics.median(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--attempts", type=int, default=100_000)
    parser.add_argument("--repeat", type=int, default=7)
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)
    url = os.environ.get("FLAREBOOK_BENCH_DATABASE_URL")
    folder = tempfile.TemporaryDirectory()
    url = url or f"sqlite:///{Path(folder.name) / 'bench.sqlite3'}"
    upgrade(url)
    engine = make_engine(url)
    built = build_school(engine, attempts=args.attempts)
    sessions = make_session_factory(engine)
    flagged = add_flags_and_altitudes(sessions)
    with sessions() as session:
        result = safety.digest(session, date_from=DATE_FROM, date_to=DATE_TO)
        reference = digest_in_python(session)
        for name, rows in result.by.items():
            for row in rows:
                counted = reference[name][row.key]
                assert row.attempts == counted["attempts"], (name, row.key)
                for code in (*safety.FLAG_CODES, safety.ANY_FLAG):
                    assert row.counts.get(code, 0) == counted[code], (name, row.key, code)
            assert len(rows) == len(reference[name]), name
        busiest = max(result.by["instructor"], key=lambda r: r.attempts)
        sql_ms = median_ms(lambda: safety.digest(session, date_from=DATE_FROM, date_to=DATE_TO), args.repeat)
        python_ms = median_ms(lambda: digest_in_python(session), args.repeat)
        drill_ms = median_ms(lambda: safety.flagged_attempts(
            session, by="instructor", key=busiest.key, flag="takeover", date_from=DATE_FROM, date_to=DATE_TO),
            args.repeat)
    print(f"database: {engine.dialect.name}; {built['attempts']:,} attempts in {built['sorties']:,} sorties, "
          f"{flagged:,} flagged; {result.total.attempts:,} counted in {DATE_FROM} to {DATE_TO}")
    print(f"digest in SQL:          {sql_ms:8.0f} ms (median of {args.repeat})")
    print(f"read rows, count in Python: {python_ms:8.0f} ms")
    print(f"attempts behind one figure: {drill_ms:8.0f} ms")
    print(f"SQL / Python: {sql_ms / python_ms:.2f}")
    engine.dispose()
    folder.cleanup()


if __name__ == "__main__":
    main()
