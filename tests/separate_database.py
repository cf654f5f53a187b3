"""A database of a test's own, apart from the session's: an SQLite file, or a new PostgreSQL database
when FLAREBOOK_TEST_DATABASE_URL is set (created here and dropped afterwards)."""
import os
import uuid
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from sqlalchemy import create_engine, text
from sqlalchemy.engine import make_url


@contextmanager
def separate_database_url(folder: Path) -> Iterator[str]:
    """The URL of a new, empty database (not migrated)."""
    postgres = os.environ.get("FLAREBOOK_TEST_DATABASE_URL")
    if not postgres:
        yield f"sqlite:///{folder / 'separate.sqlite3'}"
        return
    name = f"flarebook_sep_{uuid.uuid4().hex[:10]}"
    admin = create_engine(postgres, isolation_level="AUTOCOMMIT")
    try:
        with admin.connect() as conn:
            conn.execute(text(f'CREATE DATABASE "{name}"'))
        yield make_url(postgres).set(database=name).render_as_string(hide_password=False)
    finally:
        with admin.connect() as conn:
            conn.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()
