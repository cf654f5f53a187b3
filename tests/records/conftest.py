"""Fixtures for the records tests: SQLite files of their own, for copies, crashes and tampering."""
import shutil

import pytest

from server.config import get_settings
from server.db import make_engine, make_session_factory
from server.migrate import upgrade
from server.people import service as people
from tests.support import build_world, make_sortie


@pytest.fixture(scope="session")
def migrated_file(tmp_path_factory):
    """An empty SQLite file migrated to head once; tests copy it instead of migrating again."""
    path = tmp_path_factory.mktemp("template") / "empty.sqlite3"
    upgrade(f"sqlite:///{path}")
    return path


def drop_audit_guards(connection) -> None:
    """What someone editing the file by hand does first: drop the append-only triggers (sqlite3)."""
    names = [r[0] for r in connection.execute(
        "SELECT name FROM sqlite_master WHERE type = 'trigger' AND tbl_name = 'audit_events'")]
    assert names, "the migration put no append-only trigger on audit_events"
    for name in names:
        connection.execute(f'DROP TRIGGER "{name}"')


class FileSchool:
    """A SQLite file holding the invented test school, its URL and an instructor's API token."""

    def __init__(self, path):
        self.path = path
        self.url = f"sqlite:///{path}"
        self.engine = make_engine(self.url)
        self.sessions = make_session_factory(self.engine)
        with self.sessions() as session:
            self.world = build_world(session)
            session.commit()
            self.token = people.issue_token(session, person=self.world.instructor, label="tests")
            self.student_token = people.issue_token(session, person=self.world.student, label="tests")
            session.commit()

    def signed_sortie(self, attempts: int = 2):
        with self.sessions() as session:
            return make_sortie(session, self.world, attempts=attempts, sign=True)


@pytest.fixture
def file_school(migrated_file, tmp_path):
    path = tmp_path / "school.sqlite3"
    shutil.copy(migrated_file, path)
    school = FileSchool(path)
    yield school
    school.engine.dispose()


@pytest.fixture
def use_database(monkeypatch):
    """Point the `flarebook` command line at a database URL for one test."""
    def point(url: str) -> None:
        monkeypatch.setenv("FLAREBOOK_DATABASE_URL", url)
        get_settings.cache_clear()
    yield point
    get_settings.cache_clear()
