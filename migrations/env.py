"""Alembic environment: the URL comes from the caller's config or FLAREBOOK_DATABASE_URL."""
from alembic import context

from server.config import get_settings
from server.db import make_engine
from server.models import Base

config = context.config
target_metadata = Base.metadata


def run_migrations() -> None:
    connection = config.attributes.get("connection")
    if connection is not None:
        _run(connection)
        return
    url = config.get_main_option("sqlalchemy.url") or get_settings().database_url
    engine = make_engine(url)
    with engine.connect() as conn:
        _run(conn)
        conn.commit()
    engine.dispose()


def _run(connection) -> None:
    context.configure(
        connection=connection,
        target_metadata=target_metadata,
        render_as_batch=True,  # SQLite needs batch mode to alter tables
        compare_type=True,
    )
    with context.begin_transaction():
        context.run_migrations()


run_migrations()
