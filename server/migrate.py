"""Run and check Alembic migrations from code (used by `flarebook init` and the tests)."""
from alembic import command
from alembic.config import Config

from server.config import PROJECT_ROOT


def alembic_config(database_url: str) -> Config:
    config = Config()
    config.set_main_option("script_location", str(PROJECT_ROOT / "migrations"))
    config.set_main_option("sqlalchemy.url", database_url)
    # Date-prefixed file names so the history reads in order.
    config.set_main_option("file_template", "%%(year)d_%%(month).2d_%%(day).2d_%%(rev)s_%%(slug)s")
    return config


def upgrade(database_url: str) -> None:
    command.upgrade(alembic_config(database_url), "head")


def check(database_url: str) -> None:
    """Raise if the models and the migrations have drifted apart."""
    command.check(alembic_config(database_url))
