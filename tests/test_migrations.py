"""The Alembic migrations build exactly the tables the models describe."""
from alembic.script import ScriptDirectory

from server.migrate import alembic_config, check


def test_models_and_migrations_agree(database_url):
    # `alembic check` compares the migrated database with the models and fails on any difference.
    check(database_url)


def test_migration_history_is_one_line(database_url):
    heads = ScriptDirectory.from_config(alembic_config(database_url)).get_heads()
    assert len(heads) == 1, f"several migration heads: {heads}; merge them"
