"""Audit appends under contention: many threads, each append in its own transaction, same run.

    .venv/bin/python -m tests.benchmarks.bench_audit_appends                       # SQLite file
    .venv/bin/python -m tests.benchmarks.bench_audit_appends --postgres postgresql+psycopg://postgres@127.0.0.1:5432/test

Writers take turns (SQLite BEGIN IMMEDIATE; PostgreSQL pg_advisory_xact_lock), so appends are serial
by design; this measures what that costs: appends per second, the p99 of one append transaction, and
that the chain verifies with contiguous sequence numbers afterwards.
"""
import argparse
import statistics
import tempfile
import threading
import time
import uuid
from pathlib import Path

from sqlalchemy import create_engine, func, select, text
from sqlalchemy.engine import make_url

from server.db import make_engine, make_session_factory, transaction
from server.migrate import upgrade
from server.records import audit
from server.records.models import AuditEvent
from tests.benchmarks import machine


def measure(url: str, threads: int, per_thread: int) -> dict:
    engine = make_engine(url)
    sessions = make_session_factory(engine)
    durations: list[float] = []
    start = threading.Barrier(threads)

    def work(n: int):
        start.wait()
        for i in range(per_thread):
            began = time.perf_counter()
            with transaction(sessions) as session:
                audit.append(session, actor_id=None, action="bench", entity="thread", entity_id=n,
                             after={"i": i, "note": "benchmark entry"})
            durations.append(time.perf_counter() - began)

    began = time.perf_counter()
    pool = [threading.Thread(target=work, args=(n,)) for n in range(threads)]
    for t in pool:
        t.start()
    for t in pool:
        t.join()
    elapsed = time.perf_counter() - began
    with sessions() as session:
        report = audit.verify(session)
        count = session.scalar(select(func.count()).select_from(AuditEvent))
    engine.dispose()
    return {"appends_per_s": count / elapsed, "p50_ms": statistics.median(durations) * 1000,
            "p99_ms": statistics.quantiles(durations, n=100)[98] * 1000, "entries": count,
            "chain_ok": report.ok and report.head.seq == count}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--postgres", help="a PostgreSQL URL; a database of its own is made and dropped")
    parser.add_argument("--threads", type=int, default=16)
    parser.add_argument("--per-thread", type=int, default=50)
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)
    if args.postgres:
        name = f"flarebook_bench_{uuid.uuid4().hex[:8]}"
        admin = create_engine(args.postgres, isolation_level="AUTOCOMMIT")
        with admin.connect() as conn:
            conn.execute(text(f'CREATE DATABASE "{name}"'))
        url = make_url(args.postgres).set(database=name).render_as_string(hide_password=False)
        try:
            upgrade(url)
            result = measure(url, args.threads, args.per_thread)
        finally:
            with admin.connect() as conn:
                conn.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
            admin.dispose()
    else:
        url = f"sqlite:///{Path(tempfile.mkdtemp()) / 'appends.sqlite3'}"
        upgrade(url)
        result = measure(url, args.threads, args.per_thread)
    print(f"{make_url(url).get_backend_name()}: {args.threads} threads x {args.per_thread} appends: "
          f"{result['appends_per_s']:.0f} appends/s, p50 {result['p50_ms']:.1f} ms, p99 {result['p99_ms']:.1f} ms, "
          f"{result['entries']} entries, chain {'holds' if result['chain_ok'] else 'BROKEN'}")


if __name__ == "__main__":
    main()
