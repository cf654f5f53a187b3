"""Readiness-board benchmark: today's board from the kept state against reading the state rows alone, same run.

    .venv/bin/python -m tests.benchmarks.bench_currency            # SQLite at 250k and 1M attempts
    .venv/bin/python -m tests.benchmarks.bench_currency --postgres postgresql+psycopg://postgres@127.0.0.1:5432/test
    .venv/bin/python -m tests.benchmarks.bench_currency --sizes 20000 --runs 2 --busy-ok   # a smoke run

The school (2,000 pilots, 12 rules, three years of attempts: tests/benchmarks/school_generator.py) is
inserted in bulk, then the kept state is built (`flarebook currency rebuild`, timed), and the timed runs start
once its rows are older than the margin inside which a board reads rows again (2 s,
`server/currency/today_cells.py`), as on a running school, where a rebuild is rare. The floor is one bare
SQL query reading every column of every kept row (`currency_kept_standings`), through the database driver.
Measured through the app in-process, for the school's today: the JSON board (`/api/v1/currency`) and the HTML
board's default first page (`/currency`), each cold (made afresh: before each run one pilot's kept rows
are rewritten from their history, as an amended record's signature does, which writes a new version token)
and kept (served from the board kept in memory, `server/currency/board_cache.py`);
the HTML board with every row (`?show=all`); for comparison,
the JSON board of yesterday, which is still evaluated from the whole history. Then a signature (the
service's `record_instructor_signature` and the commit, a draft of four attempts) with the kept state's
hook and without it, alternately. Each figure is the best of several runs; compare ratios, not absolute
times. The load average is printed first; on a busy machine the figures are refused unless --busy-ok,
and then marked as not results.
"""
import argparse
import statistics
import tempfile
import time
import uuid
from datetime import UTC, datetime, timedelta
from pathlib import Path

from fastapi.testclient import TestClient
from sqlalchemy import Integer, create_engine, insert, text
from sqlalchemy.engine import make_url

from server.app import create_app
from server.config import Settings
from server.currency import kept, today_cells
from server.db import transaction
from server.logbook import hooks as logbook_hooks
from server.logbook import service as logbook
from server.logbook.models import Sortie
from server.logbook.schemas import AttemptFields, SortieCreate
from server.migrate import upgrade
from server.models import Base
from server.people import service as people
from server.people.models import ApiToken, Person, UserSession
from server.people.security import sha256_hex
from server.types import utcnow
from tests.benchmarks import machine
from tests.benchmarks.school_generator import NOW, build_school

SIZES = (250_000, 1_000_000)
TOKEN = "fbk_bench-token-for-the-chief-pilot"
COOKIE = "bench-cookie-for-the-chief-pilot"
CSRF = "bench-csrf"
SIGNATURES = 40  # half with the hook, half without


def best_of(fn, runs: int, before=None) -> tuple[float, object]:
    """The best time of fn; `before` (untimed) runs ahead of each."""
    times, result = [], None
    for _ in range(runs):
        if before is not None:
            before()
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return min(times), result


def _draft(session, pilot_id: int, day_offset: int):
    """A draft of four attempts for a pilot, made through the services by the chief pilot (person 1)."""
    chief = session.get(Person, 1)
    sortie = logbook.create_sortie(session, actor=chief, data=SortieCreate(
        flown_at=datetime.now(UTC) - timedelta(days=day_offset), aircraft_id=1, pilot_id=pilot_id, site_id=1,
        instructor_id=1, oat_c=15, altimeter_hpa=1013.25))
    for maneuver in ("straight_in", "turn_180", "straight_in", "hovering"):
        logbook.add_attempt(session, actor=chief, sortie=sortie, data=AttemptFields(
            maneuver=maneuver, termination="to_hover" if maneuver == "hovering" else "touchdown", descent_kias=65,
            nr_low_pct=95, nr_high_pct=104, flare_height_ft=90, touchdown_speed_kt=3, point_error_ft=20))
    session.flush()
    session.refresh(sortie)
    return sortie.id


def advance_sequences(engine) -> None:
    """PostgreSQL: the bulk load gave ids itself, so each id sequence is moved past them for new rows."""
    if engine.dialect.name != "postgresql":
        return
    with engine.begin() as conn:
        for table in Base.metadata.sorted_tables:
            if "id" in table.c and table.c.id.primary_key and isinstance(table.c.id.type, Integer):
                conn.execute(text(f"SELECT setval(pg_get_serial_sequence('{table.name}', 'id'), "
                                  f"COALESCE((SELECT max(id) FROM {table.name}), 0) + 1, false) "
                                  f"WHERE pg_get_serial_sequence('{table.name}', 'id') IS NOT NULL"))


def signature_times(factory) -> tuple[float, float]:
    """Median seconds of a signature with the kept state's hook and without it, taken alternately."""
    with transaction(factory) as session:
        pilots = [pid for (pid,) in session.execute(text(
            "SELECT id FROM people WHERE active AND id > 400 ORDER BY id LIMIT :n"), {"n": SIGNATURES})]
        drafts = [_draft(session, pid, i % 20) for i, pid in enumerate(pilots)]
    saved = list(logbook_hooks.AFTER_SIGNING)
    with_hook, without = [], []
    try:
        for i, sortie_id in enumerate(drafts):
            hooked = i % 2 == 0
            logbook_hooks.AFTER_SIGNING[:] = saved if hooked else []
            with factory() as session:
                sortie = session.get(Sortie, sortie_id)
                chief = session.get(Person, 1)
                _ = sortie.attempts, chief.role_rows
                start = time.perf_counter()
                logbook.record_instructor_signature(session, actor=chief, sortie=sortie)
                session.commit()
                (with_hook if hooked else without).append(time.perf_counter() - start)
    finally:
        logbook_hooks.AFTER_SIGNING[:] = saved
    return statistics.median(with_hook), statistics.median(without)


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
    factory = app.state.sessions
    start = time.perf_counter()
    with transaction(factory) as session:
        state_rows = kept.rebuild(session)
        today = people.school_today(session)
    rebuild_s = time.perf_counter() - start
    with engine.begin() as conn:
        conn.execute(text("ANALYZE"))
    # A running school: the rebuild's rows older than the margin inside which a board reads rows again.
    time.sleep(today_cells.MARGIN_US / 1e6)

    def floor():
        # Bare SQL through the driver, rows fetched without type processing: the state rows alone.
        with engine.connect() as conn:
            return len(conn.exec_driver_sql("SELECT * FROM currency_kept_standings").fetchall())

    client = TestClient(app, base_url="http://testserver")
    client.cookies.set("flarebook", COOKIE)
    bearer = {"Authorization": f"Bearer {TOKEN}"}

    # Timed: the request and its body as a client receives it (decompressed); reading the answer is not.
    def board_json(query=""):
        answer = client.get(f"/api/v1/currency{query}", headers=bearer)
        assert answer.status_code == 200, answer.text
        return answer

    def board_html(query=""):
        answer = client.get(f"/currency{query}")
        assert answer.status_code == 200, answer.text[:500]
        return answer

    def json_rows(answer) -> int:
        return len(answer.json()["rows"])

    def html_rows(answer) -> int:
        return answer.text.count("<tr class=\"row-")

    with transaction(factory) as session:
        changing = [pid for (pid,) in session.execute(text(
            "SELECT DISTINCT pilot_id FROM currency_kept_standings ORDER BY pilot_id LIMIT :n"), {"n": 4 * runs})]

    def changed():
        # A real change, as an amended record's signature makes: one pilot's kept rows rewritten from their
        # history (and so a new version token), so the next board is made afresh with that pilot's new rows.
        with transaction(factory) as session:
            kept.refresh(session, person_ids=[changing.pop()])

    board_json()  # warm caches and compiled statements once, as a running server would be
    floor_s, floor_rows = best_of(floor, runs)
    json_cold_s, _ = best_of(board_json, runs, before=changed)
    html_cold_s, _ = best_of(board_html, runs, before=changed)
    json_s, json_answer = best_of(board_json, runs)
    html_page_s, _ = best_of(board_html, runs)
    html_all_s, html_answer = best_of(lambda: board_html("?show=all"), runs)
    yesterday = (today - timedelta(days=1)).isoformat()
    history_s, history_answer = best_of(lambda: board_json(f"?as_of={yesterday}"), max(1, min(runs, 2)))
    floor_again_s, _ = best_of(floor, runs)
    floor_s = min(floor_s, floor_again_s)
    advance_sequences(engine)
    sign_with_s, sign_without_s = signature_times(factory)
    engine.dispose()
    return {"attempts": counts["attempts"], "load_s": load_s, "rebuild_s": rebuild_s, "state_rows": state_rows,
            "floor_s": floor_s, "floor_rows": floor_rows, "json_s": json_s, "json_cold_s": json_cold_s,
            "html_cold_s": html_cold_s, "board_rows": json_rows(json_answer),
            "html_page_s": html_page_s, "html_all_s": html_all_s, "html_rows": html_rows(html_answer),
            "history_s": history_s, "history_rows": json_rows(history_answer), "sign_with_s": sign_with_s, "sign_without_s": sign_without_s}


def report(label: str, results: list[dict], busy: bool) -> None:
    print(f"\n{label}" + ("  (BUSY MACHINE: these figures are not results)" if busy else ""))
    print(f"{'attempts':>10} {'rebuild s':>9} {'state rows':>10} {'floor ms':>8} {'JSON cold':>9} {'ratio':>5} "
          f"{'JSON kept':>9} {'ratio':>5} {'HTML p1 cold':>12} {'ratio':>5} {'HTML p1 kept':>12} {'ratio':>5} "
          f"{'HTML all ms':>11} {'yesterday JSON ms':>17} "
          f"{'sign ms (hook)':>14} {'sign ms (none)':>14} {'ratio':>5}")
    for r in results:
        print(f"{r['attempts']:>10,} {r['rebuild_s']:>9.1f} {r['state_rows']:>10,} {r['floor_s'] * 1e3:>8.1f} "
              f"{r['json_cold_s'] * 1e3:>9.1f} {r['json_cold_s'] / r['floor_s']:>5.2f} "
              f"{r['json_s'] * 1e3:>9.1f} {r['json_s'] / r['floor_s']:>5.2f} "
              f"{r['html_cold_s'] * 1e3:>12.1f} {r['html_cold_s'] / r['floor_s']:>5.2f} "
              f"{r['html_page_s'] * 1e3:>12.1f} {r['html_page_s'] / r['floor_s']:>5.2f} "
              f"{r['html_all_s'] * 1e3:>11.1f} {r['history_s'] * 1e3:>17.1f} "
              f"{r['sign_with_s'] * 1e3:>14.2f} {r['sign_without_s'] * 1e3:>14.2f} "
              f"{r['sign_with_s'] / r['sign_without_s']:>5.2f}")
        assert r["floor_rows"] == r["state_rows"] == r["board_rows"], r  # one kept row per board row


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
    busy = machine.check(args.busy_ok).busy
    sizes = [int(s) for s in args.sizes.split(",")]
    if args.postgres:
        report("PostgreSQL", run_postgres(args.postgres, sizes, args.runs), busy)
    else:
        report("SQLite", run_sqlite(sizes, args.runs), busy)


if __name__ == "__main__":
    main()
