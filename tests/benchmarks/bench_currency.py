"""Readiness-board benchmark: board server time against the floor of reading its rows, same run, same database.

    .venv/bin/python -m tests.benchmarks.bench_currency            # SQLite at 250k, 500k and 1M attempts
    .venv/bin/python -m tests.benchmarks.bench_currency --postgres postgresql+psycopg://postgres@127.0.0.1:5432/test

The floor is one bare SQL query that reads the same qualifying rows (latest signed versions, not taken over,
flown by the as-of date) with every column the rules test, run through the database driver and fetched. The board is measured
through the app in-process: the JSON board and the HTML page with every row (`show=all`), plus the default
first page. Each figure is the best of several runs; compare ratios, not absolute times.
"""
import argparse
import statistics
import tempfile
import time
import uuid
from pathlib import Path

from fastapi.testclient import TestClient
from sqlalchemy import create_engine, insert, select, text
from sqlalchemy.engine import make_url

from server.app import create_app
from server.config import Settings
from server.currency.evaluation import base_from, counting_attempts_filter
from server.fleet.models import Aircraft
from server.logbook.models import Attempt, Sortie
from server.migrate import upgrade
from server.people.models import ApiToken, UserSession
from server.people.security import sha256_hex
from server.types import utcnow
from tests.benchmarks.school_generator import AS_OF, NOW, build_school
from tests.benchmarks import machine

SIZES = (250_000, 500_000, 1_000_000)
TOKEN = "fbk_bench-token-for-the-chief-pilot"
COOKIE = "bench-cookie-for-the-chief-pilot"
CSRF = "bench-csrf"


def floor_statement():
    """The floor: every qualifying row with the columns the rules test, nothing computed."""
    return base_from(select(Attempt.pilot_id, Attempt.flown_on, Attempt.maneuver, Attempt.termination,
                            Aircraft.type_id, Sortie.instructor_id, Attempt.satisfactory, Attempt.score)
                     ).where(counting_attempts_filter(AS_OF))


def best_of(fn, runs: int) -> tuple[float, object]:
    times, result = [], None
    for _ in range(runs):
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return min(times), result


def measure(url: str, attempts: int, runs: int) -> dict:
    upgrade(url)
    app = create_app(Settings(database_url=url))
    engine = app.state.engine
    start = time.perf_counter()
    counts = build_school(engine, attempts=attempts)
    load_s = time.perf_counter() - start
    with engine.begin() as conn:
        conn.execute(insert(ApiToken.__table__), [{"person_id": 1, "token_sha256": sha256_hex(TOKEN), "label": "bench",
                                                  "created_at": NOW}])
        # The session is made by the wall clock, or it would already have timed out.
        conn.execute(insert(UserSession.__table__), [{"id": sha256_hex(COOKIE), "person_id": 1, "csrf_token": CSRF,
                                                     "created_at": utcnow(), "last_seen_at": utcnow()}])
        conn.execute(text("ANALYZE"))

    # Bare SQL: the statement compiled once and run through the driver, rows fetched without type processing.
    floor_sql = str(floor_statement().compile(engine, compile_kwargs={"literal_binds": True}))

    def floor():
        with engine.connect() as conn:
            return len(conn.exec_driver_sql(floor_sql).fetchall())

    client = TestClient(app, base_url="http://testserver")
    client.cookies.set("flarebook", COOKIE)
    bearer = {"Authorization": f"Bearer {TOKEN}"}
    day = AS_OF.isoformat()

    def board_json():
        answer = client.get(f"/api/v1/currency?as_of={day}", headers=bearer)
        assert answer.status_code == 200, answer.text
        return len(answer.json()["rows"])

    def board_html(extra=""):
        answer = client.get(f"/currency?as_of={day}{extra}")
        assert answer.status_code == 200, answer.text[:500]
        return answer.text.count("<tr class=\"row-")

    board_json()  # warm caches and compiled statements once, as a running server would be
    floor_s, floor_rows = best_of(floor, runs)
    json_s, json_rows = best_of(board_json, runs)
    html_all_s, html_rows = best_of(lambda: board_html("&show=all"), runs)
    html_page_s, _ = best_of(board_html, runs)
    floor_again_s, _ = best_of(floor, runs)
    floor_s = min(floor_s, floor_again_s)
    engine.dispose()
    return {"attempts": counts["attempts"], "load_s": load_s, "floor_s": floor_s, "floor_rows": floor_rows,
            "json_s": json_s, "board_rows": json_rows, "html_all_s": html_all_s, "html_rows": html_rows,
            "html_page_s": html_page_s}


def report(label: str, results: list[dict]) -> None:
    print(f"\n{label}")
    print(f"{'attempts':>10} {'load s':>7} {'floor s':>8} {'JSON s':>7} {'ratio':>6} {'HTML all s':>10} {'ratio':>6} "
          f"{'HTML page1 s':>12} {'rows read':>10} {'board rows':>10}")
    for r in results:
        print(f"{r['attempts']:>10,} {r['load_s']:>7.1f} {r['floor_s']:>8.3f} {r['json_s']:>7.3f} "
              f"{r['json_s'] / r['floor_s']:>6.2f} {r['html_all_s']:>10.3f} {r['html_all_s'] / r['floor_s']:>6.2f} "
              f"{r['html_page_s']:>12.3f} {r['floor_rows']:>10,} {r['board_rows']:>10,}")
    if len(results) > 1:
        per_million = [r["json_s"] / r["attempts"] * 1e6 for r in results]
        print(f"JSON board seconds per million attempts: {', '.join(f'{x:.2f}' for x in per_million)} "
              f"(spread {statistics.pstdev(per_million) / statistics.mean(per_million):.0%})")


def run_sqlite(sizes, runs: int) -> list[dict]:
    out = []
    with tempfile.TemporaryDirectory() as folder:
        for size in sizes:
            out.append(measure(f"sqlite:///{Path(folder) / f'bench_{size}.sqlite3'}", size, runs))
    return out


def run_postgres(admin_url: str, sizes, runs: int) -> list[dict]:
    admin = create_engine(admin_url, isolation_level="AUTOCOMMIT")
    out = []
    try:
        for size in sizes:
            name = f"flarebook_bench_{uuid.uuid4().hex[:8]}"
            with admin.connect() as conn:
                conn.execute(text(f'CREATE DATABASE "{name}"'))
            try:
                url = make_url(admin_url).set(database=name).render_as_string(hide_password=False)
                out.append(measure(url, size, runs))
            finally:
                with admin.connect() as conn:
                    conn.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
    finally:
        admin.dispose()
    return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--postgres", help="an admin URL; the benchmark makes and drops a database of its own")
    parser.add_argument("--sizes", default=",".join(map(str, SIZES)))
    parser.add_argument("--runs", type=int, default=5)
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)
    sizes = [int(s) for s in args.sizes.split(",")]
    if args.postgres:
        report("PostgreSQL", run_postgres(args.postgres, sizes, args.runs))
    else:
        report("SQLite", run_sqlite(sizes, args.runs))


if __name__ == "__main__":
    main()
