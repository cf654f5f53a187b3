"""Records you can prove: the audit table refuses UPDATE and DELETE; tokens expire; resets are marked.

The audit chain is append-only in the database itself, so a mistake in code cannot rewrite history:
SQLite triggers that RAISE(ABORT) (SQLite docs, "CREATE TRIGGER", the RAISE function), and on
PostgreSQL one statement-level trigger that raises for UPDATE, DELETE and TRUNCATE. A later
migration that rebuilds audit_events in SQLite batch mode must create the triggers again.

Revision ID: d4e7a9c1b3f5
Revises: afa3bff855a7
Created: 2026-12-02 22:20:00
"""
from datetime import timedelta

import sqlalchemy as sa
from alembic import op

revision = 'd4e7a9c1b3f5'
down_revision = 'afa3bff855a7'
branch_labels = None
depends_on = None

REFUSAL = "audit_events is append-only: its entries are never changed or removed"
SQLITE_TRIGGERS = {
    "audit_events_no_update": f"CREATE TRIGGER audit_events_no_update BEFORE UPDATE ON audit_events "
                              f"BEGIN SELECT RAISE(ABORT, '{REFUSAL}'); END",
    "audit_events_no_delete": f"CREATE TRIGGER audit_events_no_delete BEFORE DELETE ON audit_events "
                              f"BEGIN SELECT RAISE(ABORT, '{REFUSAL}'); END",
}
POSTGRES_FUNCTION = f"""
CREATE OR REPLACE FUNCTION audit_events_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION '{REFUSAL} (% refused)', TG_OP;
END
$$"""
POSTGRES_TRIGGER = ("CREATE TRIGGER audit_events_append_only BEFORE UPDATE OR DELETE OR TRUNCATE ON audit_events "
                    "FOR EACH STATEMENT EXECUTE FUNCTION audit_events_append_only()")
TOKEN_DAYS = 90  # tokens made before expiry existed get the default lifetime from their creation


def upgrade() -> None:
    with op.batch_alter_table('people', schema=None) as batch_op:
        batch_op.add_column(sa.Column('password_must_change', sa.Boolean(), server_default=sa.false(),
                                      nullable=False))
    with op.batch_alter_table('api_tokens', schema=None) as batch_op:
        batch_op.add_column(sa.Column('expires_at', sa.DateTime(timezone=True), nullable=True))
    tokens = sa.table('api_tokens', sa.column('id', sa.Integer), sa.column('created_at', sa.DateTime(timezone=True)),
                      sa.column('expires_at', sa.DateTime(timezone=True)))
    connection = op.get_bind()
    for token_id, created_at in connection.execute(sa.select(tokens.c.id, tokens.c.created_at)).all():
        connection.execute(tokens.update().where(tokens.c.id == token_id)
                           .values(expires_at=created_at + timedelta(days=TOKEN_DAYS)))
    if connection.dialect.name == "postgresql":
        op.execute(POSTGRES_FUNCTION)
        op.execute(POSTGRES_TRIGGER)
    else:
        for statement in SQLITE_TRIGGERS.values():
            op.execute(statement)


def downgrade() -> None:
    if op.get_bind().dialect.name == "postgresql":
        op.execute("DROP TRIGGER IF EXISTS audit_events_append_only ON audit_events")
        op.execute("DROP FUNCTION IF EXISTS audit_events_append_only()")
    else:
        for name in SQLITE_TRIGGERS:
            op.execute(f"DROP TRIGGER IF EXISTS {name}")
    with op.batch_alter_table('api_tokens', schema=None) as batch_op:
        batch_op.drop_column('expires_at')
    with op.batch_alter_table('people', schema=None) as batch_op:
        batch_op.drop_column('password_must_change')
