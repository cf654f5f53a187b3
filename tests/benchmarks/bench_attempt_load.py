"""Load benchmark: logging an attempt through the API against a bare insert in the same app, same run.

    .venv/bin/python -m tests.benchmarks.bench_attempt_load [--seconds 10] [--connections 32] [--rounds 2]
    .venv/bin/python -m tests.benchmarks.bench_attempt_load --postgres postgresql+psycopg://postgres@127.0.0.1:5432/test --workers 1,2,4

SQLite (the default): one uvicorn process serves a SQLite file (WAL, synchronous=FULL, the app's own
engine). wrk (Debian package `wrk`) drives 32 connections on loopback for a bounded time at:
- the bare endpoint, added only to this benchmark's app instance: validate a 12-field model, insert one
  row through a session from the app's own session factory with BEGIN IMMEDIATE, commit;
- the audited floor, also only in this benchmark's app: the same insert behind what every write of the
  API must do besides, the bearer token checked and one audit entry appended to the chain (a plain `def`
  route with the app's `DbSession` and `ApiUser`, as the API's routes are);
- POST /api/v1/sorties/{id}/attempts with a bearer token, spread over 32 draft sorties.
Rounds alternate between the three; the figures are the median of the rounds. The goals: no errors,
attempts at 0.7 or more of the bare endpoint's throughput and a p99 at most 2 times the bare one's.

PostgreSQL (`--postgres URL`): a database of its own (flarebook_bench) is made beside the URL's and
dropped at the end; in each round, for each worker count in turn, uvicorn runs that many processes on
it and wrk logs attempts as above. The goal: 4 processes log at least 1.5 times what one does. Either way the audit chain must
verify afterwards (with several processes appending to it at once on PostgreSQL).
"""
import argparse
import json
import os
import re
import shutil
import socket
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import httpx
from pydantic import BaseModel
from sqlalchemy import Column, Float, Integer, MetaData, String, Table, create_engine, insert, text
from sqlalchemy.engine import make_url

from server.app import create_app
from server.config import PROJECT_ROOT, Settings
from server.db import begin_writing, make_engine, make_session_factory
from server.deps import DbSession
from server.migrate import upgrade
from server.people import service as people
from server.people.deps import ApiUser
from server.records import audit
from tests.benchmarks import machine
from tests.support import build_world, make_sortie

PG_DATABASE = "flarebook_bench"

bench_metadata = MetaData()
bench_rows = Table(
    "bench_rows", bench_metadata, Column("id", Integer, primary_key=True),
    *[Column(f"v{i}", Float) for i in range(11)], Column("label", String(40)),
)
ATTEMPT = {"maneuver": "straight_in", "termination": "touchdown", "landing_dir_deg": 270, "entry_height_ft": 600,
           "entry_kias": 65, "descent_kias": 64, "nr_low_pct": 95, "nr_high_pct": 104, "flare_height_ft": 90,
           "touchdown_speed_kt": 3, "point_error_ft": 20, "heading_error_deg": 2}


class BareRow(BaseModel):
    v0: float
    v1: float
    v2: float
    v3: float
    v4: float
    v5: float
    v6: float
    v7: float
    v8: float
    v9: float
    v10: float
    label: str


def bench_app():
    """The production app plus one bare insert endpoint that exists only here."""
    app = create_app(Settings(database_url=os.environ["FLAREBOOK_DATABASE_URL"]))

    @app.post("/bench/bare", status_code=201)
    async def bare(row: BareRow):
        with app.state.sessions() as session:
            begin_writing(session)
            new_id = session.execute(insert(bench_rows).values(**row.model_dump())).inserted_primary_key[0]
            session.commit()
        return {"id": new_id}

    @app.post("/bench/audited", status_code=201)
    def audited(row: BareRow, db: DbSession, person: ApiUser):
        new_id = db.execute(insert(bench_rows).values(**row.model_dump())).inserted_primary_key[0]
        audit.append(db, actor_id=person.id, action="create", entity="bench_row", entity_id=new_id,
                     after=row.model_dump())
        return {"id": new_id}

    return app


def prepare(url: str, sorties: int) -> tuple[str, str, list[int]]:
    upgrade(url)
    engine = make_engine(url)
    bench_metadata.create_all(engine)
    with make_session_factory(engine)() as session:
        world = build_world(session)
        session.commit()
        token = people.issue_token(session, person=world.instructor, label="bench")
        session.commit()
        ids = [make_sortie(session, world).id for _ in range(sorties)]
    engine.dispose()
    return url, token, ids


def lua_script(folder: Path, kind: str, token: str, sortie_ids: list[int]) -> Path:
    auth = f'wrk.headers["Authorization"] = "Bearer {token}"\n'
    if kind in ("bare", "audited"):
        body = json.dumps({**{f"v{i}": float(i) for i in range(11)}, "label": "bench"})
        paths = [f"/bench/{kind}"]
        auth = "" if kind == "bare" else auth
    else:
        body = json.dumps(ATTEMPT)
        paths = [f"/api/v1/sorties/{i}/attempts" for i in sortie_ids]
    script = folder / f"{kind}.lua"
    script.write_text(
        'wrk.method = "POST"\n'
        f"wrk.body = {json.dumps(body)}\n"
        'wrk.headers["Content-Type"] = "application/json"\n' + auth +
        "paths = {" + ", ".join(json.dumps(p) for p in paths) + "}\n"
        "counter = 0\n"
        "request = function()\n"
        "  counter = counter + 1\n"
        "  return wrk.format(nil, paths[(counter % #paths) + 1])\n"
        "end\n"
    )
    return script


def parse_wrk(output: str) -> dict:
    """The figures of one wrk --latency report; percentiles from its "Latency Distribution" block only.

    The thread statistics above that block end in a "+/- Stdev" column (e.g. 71.50%), which a bare
    search for "50%" would take for the median.
    """
    def ms(text: str) -> float:
        value, unit = re.fullmatch(r"([\d.]+)(us|ms|s|m)", text).groups()
        return float(value) * {"us": 0.001, "ms": 1.0, "s": 1000.0, "m": 60_000.0}[unit]

    block = re.search(r"Latency Distribution\n((?:[ \t]+[\d.]+%[ \t]+\S+[ \t]*\n)+)", output)
    percentiles = dict(re.findall(r"([\d.]+)%[ \t]+(\S+)", block.group(1))) if block else {}
    if not {"50", "99"} <= percentiles.keys():
        raise ValueError(f"wrk's report has no latency distribution (was --latency given?):\n{output}")
    errors = re.search(r"Socket errors: connect (\d+), read (\d+), write (\d+), timeout (\d+)", output)
    return {
        "rps": float(re.search(r"Requests/sec:\s+([\d.]+)", output).group(1)),
        "requests": int(re.search(r"(\d+) requests in", output).group(1)),
        "p50_ms": ms(percentiles["50"]),
        "p99_ms": ms(percentiles["99"]),
        "non_2xx": int(m.group(1)) if (m := re.search(r"Non-2xx or 3xx responses: (\d+)", output)) else 0,
        "socket_errors": sum(map(int, errors.groups())) if errors else 0,
    }


def run_wrk(port: int, script: Path, seconds: int, connections: int) -> dict:
    # A tablet waits longer than wrk's default 2 s before giving up; slow answers still show in p99.
    command = ["wrk", "-t2", f"-c{connections}", f"-d{seconds}s", "--timeout", "10s", "--latency", "-s", str(script),
               f"http://127.0.0.1:{port}"]
    return parse_wrk(subprocess.run(command, capture_output=True, text=True, check=True).stdout)


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class Server:
    """uvicorn serving this benchmark's app with `workers` processes, for the length of a with-block."""

    def __init__(self, url: str, workers: int = 1):
        self.url, self.workers, self.port = url, workers, free_port()

    def __enter__(self) -> "Server":
        self.process = subprocess.Popen(
            [sys.executable, "-m", "uvicorn", "tests.benchmarks.bench_attempt_load:bench_app", "--factory",
             "--port", str(self.port), "--workers", str(self.workers), "--log-level", "warning", "--no-access-log"],
            cwd=PROJECT_ROOT, env={**os.environ, "FLAREBOOK_DATABASE_URL": self.url},
        )
        for _ in range(600):
            try:
                httpx.get(f"http://127.0.0.1:{self.port}/openapi.json", timeout=1)
                break
            except httpx.TransportError:
                time.sleep(0.1)
        time.sleep(0.5 * self.workers)  # every worker process has to be listening, not only the first
        return self

    def __exit__(self, *_exc) -> None:
        self.process.terminate()
        self.process.wait(timeout=30)


def chain_report(url: str):
    engine = make_engine(url)
    with make_session_factory(engine)() as session:
        chain = audit.verify(session)
    engine.dispose()
    return chain


def chain_words(chain) -> str:
    return f"audit chain {'holds' if chain.ok else 'BROKEN: ' + str(chain.problem)} ({chain.entries} entries)"


def median_figures(runs: list[dict]) -> dict:
    return {k: statistics.median(r[k] for r in runs) for k in ("rps", "p50_ms", "p99_ms")}


def error_count(runs: list[dict]) -> int:
    return sum(r["non_2xx"] + r["socket_errors"] for r in runs)


def figures_line(label: str, figures: dict) -> str:
    return f"  {label:10s} {figures['rps']:8.0f} req/s   p50 {figures['p50_ms']:7.1f} ms   p99 {figures['p99_ms']:7.1f} ms"


def sqlite_run(args, folder: Path) -> bool:
    url, token, sortie_ids = prepare(f"sqlite:///{folder / 'bench.sqlite3'}", args.connections)
    kinds = ("bare", "audited", "attempt")
    scripts = {kind: lua_script(folder, kind, token, sortie_ids) for kind in kinds}
    results = {kind: [] for kind in kinds}
    with Server(url) as server:
        for _ in range(args.rounds):
            for kind in kinds:
                results[kind].append(run_wrk(server.port, scripts[kind], args.seconds, args.connections))
                print(kind, results[kind][-1], flush=True)
    chain = chain_report(url)
    summary = {kind: median_figures(runs) for kind, runs in results.items()}
    errors = sum(error_count(runs) for runs in results.values())
    ratio = summary["attempt"]["rps"] / summary["bare"]["rps"]
    p99_ratio = summary["attempt"]["p99_ms"] / summary["bare"]["p99_ms"]
    print(f"\n{args.connections} connections, {args.seconds} s x {args.rounds} rounds each, one uvicorn process, "
          "SQLite WAL synchronous=FULL")
    for kind, figures in summary.items():
        print(figures_line(kind, figures))
    floor_ratio = summary["audited"]["rps"] / summary["bare"]["rps"]
    print(f"  attempts / bare = {ratio:.2f} (goal: at least 0.70); p99 attempts / bare = {p99_ratio:.2f} "
          f"(goal: at most 2); errors: {errors}; {chain_words(chain)}")
    print(f"  audited floor / bare = {floor_ratio:.2f}; attempts / audited floor = "
          f"{summary['attempt']['rps'] / summary['audited']['rps']:.2f}")
    return ratio >= 0.7 and p99_ratio <= 2 and errors == 0 and chain.ok


def postgres_run(args, folder: Path) -> bool:
    admin = create_engine(args.postgres, isolation_level="AUTOCOMMIT")
    url = make_url(args.postgres).set(database=PG_DATABASE).render_as_string(hide_password=False)
    with admin.connect() as conn:
        conn.execute(text(f'DROP DATABASE IF EXISTS "{PG_DATABASE}" WITH (FORCE)'))
        conn.execute(text(f'CREATE DATABASE "{PG_DATABASE}"'))
    try:
        url, token, sortie_ids = prepare(url, args.connections)
        script = lua_script(folder, "attempt", token, sortie_ids)
        # Rounds alternate between the settings (a fresh server each run), as on SQLite: what drifts
        # during the benchmark (the tables growing, the machine) falls on every setting alike.
        runs: dict[int, list[dict]] = {workers: [] for workers in args.workers}
        for _ in range(args.rounds):
            for workers in args.workers:
                with Server(url, workers) as server:
                    runs[workers].append(run_wrk(server.port, script, args.seconds, args.connections))
                print(f"{workers} workers", runs[workers][-1], flush=True)
        summary = {workers: median_figures(found) for workers, found in runs.items()}
        errors = sum(error_count(found) for found in runs.values())
        chain = chain_report(url)
    finally:
        with admin.connect() as conn:
            conn.execute(text(f'DROP DATABASE IF EXISTS "{PG_DATABASE}" WITH (FORCE)'))
        admin.dispose()
    print(f"\n{args.connections} connections, {args.seconds} s x {args.rounds} rounds each, logging attempts, "
          f"uvicorn worker processes on one PostgreSQL")
    for workers, figures in summary.items():
        print(figures_line(f"{workers} worker{'s' if workers > 1 else ''}", figures))
    ok = errors == 0 and chain.ok
    if 1 in summary and 4 in summary:
        scale = summary[4]["rps"] / summary[1]["rps"]
        ok = ok and scale >= 1.5
        print(f"  4 workers / 1 worker = {scale:.2f} (goal: at least 1.5)", end="; ")
    print(f"errors: {errors}; {chain_words(chain)}")
    return ok


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seconds", type=int, default=10)
    parser.add_argument("--connections", type=int, default=32)
    parser.add_argument("--rounds", type=int, default=2)
    parser.add_argument("--postgres", help="a PostgreSQL URL: the benchmark makes and drops a database beside it")
    parser.add_argument("--workers", default="1,2,4",
                        type=lambda text: [int(n) for n in text.split(",")],
                        help="uvicorn worker counts to measure on PostgreSQL (default 1,2,4)")
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)
    if shutil.which("wrk") is None:
        sys.exit("install wrk first (Debian: apt-get install wrk)")
    folder = Path(tempfile.mkdtemp(prefix="flarebook-bench-"))
    try:
        ok = postgres_run(args, folder) if args.postgres else sqlite_run(args, folder)
    finally:
        shutil.rmtree(folder, ignore_errors=True)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
