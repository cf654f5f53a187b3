"""Conditions and helicopter-type page benchmark, on SQLite in a temporary folder.

    .venv/bin/python -m tests.benchmarks.bench_setup_pages

Times, median of many runs, in-process through the app: POST /api/v1/conditions with a METAR (the sortie
sheet calls it as conditions are typed), drawing the height-velocity SVG alone for a 30-attempt sortie,
and serving the whole type page with that chart. Goals: conditions under 20 ms, the type page under 100 ms.
"""
import argparse
import statistics
import tempfile
import time
from pathlib import Path

from fastapi.testclient import TestClient

from server.app import create_app
from server.config import Settings
from server.fleet.hvchart import Entry, hv_chart_svg
from server.logbook import service as logbook
from server.logbook.schemas import AttemptFields
from server.migrate import upgrade
from server.people import service as people
from server.people.models import Person
from tests.support import build_world, make_sortie
from tests.benchmarks import machine

METAR = "METAR YUDO 221630Z 24008G18KT 9999 SCT010 17/16 Q1018"
REGION = [(0, 10), (0, 400), (30, 300), (40, 100), (15, 10)]


def median_ms(fn, runs: int) -> float:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times) * 1000


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    args = machine.add_busy_ok(parser).parse_args()
    machine.check(args.busy_ok)
    with tempfile.TemporaryDirectory() as folder:
        url = f"sqlite:///{Path(folder) / 'bench.sqlite3'}"
        upgrade(url)
        app = create_app(Settings(database_url=url))
        with app.state.sessions() as session:
            world = build_world(session)
            session.commit()
            sortie = make_sortie(session, world)
            actor = session.get(Person, world.instructor.id)
            for n in range(30):
                logbook.add_attempt(session, actor=actor, sortie=sortie, data=AttemptFields(
                    maneuver="straight_in", termination="power_recovery", entry_kias=5 + 2 * n,
                    entry_height_ft=150 + 20 * n))
            token = people.issue_token(session, person=session.get(Person, world.chief.id))
            session.commit()
            type_id, sortie_id = world.helicopter.id, sortie.id
        client = TestClient(app, headers={"Authorization": f"Bearer {token}"})
        body = {"elevation_ft": 500, "landing_dir_deg": 240, "metar": METAR}
        assert client.post("/api/v1/conditions", json=body).status_code == 200
        conditions = median_ms(lambda: client.post("/api/v1/conditions", json=body), 200)

        entries = [Entry(n, 5 + 2 * n, 150 + 20 * n, n < 10) for n in range(1, 31)]
        chart = median_ms(lambda: hv_chart_svg(designation="Wren", polygons=[REGION], entries=entries), 200)

        page_client = TestClient(app, follow_redirects=False)
        cookie, _ = _signed_in(app, world.chief.id)
        page_client.cookies.set("flarebook", cookie)
        page_url = f"/setup/types/{type_id}?sortie_id={sortie_id}"
        first = page_client.get(page_url)
        assert first.status_code == 200 and 'class="hv-entry' in first.text, first.status_code
        page = median_ms(lambda: page_client.get(page_url), 100)
        app.state.engine.dispose()
    print("| measure | median |\n| --- | ---: |")
    print(f"| POST /api/v1/conditions with a METAR | {conditions:.1f} ms |")
    print(f"| height-velocity SVG, 30 entries | {chart:.2f} ms |")
    print(f"| type page with that chart | {page:.1f} ms |")


def _signed_in(app, person_id: int):
    with app.state.sessions() as session:
        cookie, row = people.start_session(session, person=session.get(Person, person_id))
        session.commit()
        return cookie, row


if __name__ == "__main__":
    main()
