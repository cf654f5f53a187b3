"""`flarebook track import SORTIE_ID FILE` as an operator runs it, in a process of its own."""
from sqlalchemy import func, select

from server.db import make_engine, make_session_factory
from server.logbook.models import Track
from tests.support import build_world, make_sortie
from tests.test_cli import database_url, migrated, one_line_reason, run  # noqa: F401 (fixtures)
from tests.logbook.test_tracks_api import AIM, track_file


def sortie_in(url: str) -> int:
    engine = make_engine(url)
    try:
        with make_session_factory(engine)() as session:
            world = build_world(session)
            world.site.aim_lat_deg, world.site.aim_lon_deg = AIM
            session.commit()
            return make_sortie(session, world).id
    finally:
        engine.dispose()


def tracks_in(url: str) -> int:
    engine = make_engine(url)
    try:
        with make_session_factory(engine)() as session:
            return session.scalar(select(func.count()).select_from(Track))
    finally:
        engine.dispose()


def test_track_import_reports_each_autorotation_found(migrated, run, tmp_path):
    sortie_id = sortie_in(migrated)
    path = tmp_path / "flight.csv"
    path.write_bytes(track_file())
    done = run("track", "import", str(sortie_id), str(path))
    assert done.returncode == 0, done.stderr
    lines = done.stdout.splitlines()
    assert lines[0].startswith(f"Track 1 for sortie {sortie_id}: csv,") and "2 practice autorotation(s) found" in lines[0]
    assert "at the ground" in lines[1] and "power recovery" in lines[2]
    assert "flight manual" in lines[-1]
    assert tracks_in(migrated) == 1


def test_track_import_of_a_bad_file_exits_with_one_line_and_stores_nothing(migrated, run, tmp_path):
    sortie_id = sortie_in(migrated)
    path = tmp_path / "notes.txt"
    path.write_bytes(b"just some notes\n")
    reason = one_line_reason(run("track", "import", str(sortie_id), str(path)))
    assert "not a track" in reason
    assert "No sortie 999" in one_line_reason(run("track", "import", "999", str(path)))
    assert tracks_in(migrated) == 0
