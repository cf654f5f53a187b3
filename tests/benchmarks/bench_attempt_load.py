"""Load benchmark: logging an attempt through the API against a bare insert in the same app, same run.

    .venv/bin/python -m tests.benchmarks.bench_attempt_load [--seconds 10] [--connections 32] [--rounds 2]

One uvicorn process serves a SQLite file (WAL, synchronous=FULL, the app's own engine). wrk (Debian
package `wrk`) drives 32 connections on loopback for a bounded time at:
- the bare endpoint, added only to this benchmark's app instance: validate a 12-field model, insert one
  row through a session from the app's own session factory with BEGIN IMMEDIATE, commit;
- POST /api/v1/sorties/{id}/attempts with a bearer token, spread over 32 draft sorties.
Rounds alternate between the two; the figures are the median of the rounds. The goal: no errors, and
attempts at no less than half the bare endpoint's throughput. Afterwards the audit chain must verify.
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
from sqlalchemy import Column, Float, Integer, MetaData, String, Table, insert

from server.app import create_app
from server.config import PROJECT_ROOT, Settings
from server.db import begin_writing, make_engine, make_session_factory
from server.migrate import upgrade
from server.people import service as people
from server.records import audit
from tests.support import build_world, make_sortie

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

    return app


def prepare(folder: Path, sorties: int) -> tuple[str, str, list[int]]:
    url = f"sqlite:///{folder / 'bench.sqlite3'}"
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
    if kind == "bare":
        body = json.dumps({**{f"v{i}": float(i) for i in range(11)}, "label": "bench"})
        paths = ["/bench/bare"]
        auth = ""
    else:
        body = json.dumps(ATTEMPT)
        paths = [f"/api/v1/sorties/{i}/attempts" for i in sortie_ids]
        auth = f'wrk.headers["Authorization"] = "Bearer {token}"\n'
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
    def ms(text: str) -> float:
        value, unit = re.match(r"([\d.]+)(us|ms|s)", text).groups()
        return float(value) * {"us": 0.001, "ms": 1.0, "s": 1000.0}[unit]

    errors = re.search(r"Socket errors: connect (\d+), read (\d+), write (\d+), timeout (\d+)", output)
    return {
        "rps": float(re.search(r"Requests/sec:\s+([\d.]+)", output).group(1)),
        "requests": int(re.search(r"(\d+) requests in", output).group(1)),
        "p50_ms": ms(re.search(r"50%\s+(\S+)", output).group(1)),
        "p99_ms": ms(re.search(r"99%\s+(\S+)", output).group(1)),
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


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seconds", type=int, default=10)
    parser.add_argument("--connections", type=int, default=32)
    parser.add_argument("--rounds", type=int, default=2)
    args = parser.parse_args()
    if shutil.which("wrk") is None:
        sys.exit("install wrk first (Debian: apt-get install wrk)")
    folder = Path(tempfile.mkdtemp(prefix="flarebook-bench-"))
    url, token, sortie_ids = prepare(folder, args.connections)
    port = free_port()
    server = subprocess.Popen(
        [sys.executable, "-m", "uvicorn", "tests.benchmarks.bench_attempt_load:bench_app", "--factory",
         "--port", str(port), "--log-level", "warning", "--no-access-log"],
        cwd=PROJECT_ROOT, env={**os.environ, "FLAREBOOK_DATABASE_URL": url},
    )
    try:
        for _ in range(300):
            try:
                httpx.get(f"http://127.0.0.1:{port}/openapi.json", timeout=1)
                break
            except httpx.TransportError:
                time.sleep(0.1)
        scripts = {kind: lua_script(folder, kind, token, sortie_ids) for kind in ("bare", "attempt")}
        results = {"bare": [], "attempt": []}
        for _ in range(args.rounds):
            for kind in ("bare", "attempt"):
                results[kind].append(run_wrk(port, scripts[kind], args.seconds, args.connections))
                print(kind, results[kind][-1], flush=True)
    finally:
        server.terminate()
        server.wait(timeout=20)

    engine = make_engine(url)
    with make_session_factory(engine)() as session:
        chain = audit.verify(session)
    engine.dispose()
    summary = {kind: {k: statistics.median(r[k] for r in runs) for k in ("rps", "p50_ms", "p99_ms")}
               for kind, runs in results.items()}
    errors = sum(r["non_2xx"] + r["socket_errors"] for runs in results.values() for r in runs)
    ratio = summary["attempt"]["rps"] / summary["bare"]["rps"]
    print(f"\n{args.connections} connections, {args.seconds} s x {args.rounds} rounds each, one uvicorn process, SQLite WAL synchronous=FULL")
    for kind, figures in summary.items():
        print(f"  {kind:8s} {figures['rps']:8.0f} req/s   p50 {figures['p50_ms']:7.1f} ms   p99 {figures['p99_ms']:7.1f} ms")
    print(f"  attempts / bare = {ratio:.2f} (goal: at least 0.50); errors: {errors}; "
          f"audit chain {'holds' if chain.ok else 'BROKEN: ' + str(chain.problem)} ({chain.entries} entries)")
    shutil.rmtree(folder, ignore_errors=True)
    return 0 if ratio >= 0.5 and errors == 0 and chain.ok else 1


if __name__ == "__main__":
    sys.exit(main())
