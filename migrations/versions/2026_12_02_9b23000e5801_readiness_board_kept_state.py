"""The readiness board's kept state: per active person and rule, what today's board needs (issue 15).

The table starts empty. `flarebook init`, `serve` and `demo` fill it after migrating when it is empty
and the school has rules and people (`server.currency.kept.rebuild_if_unbuilt`); a database migrated
by other means is filled with `flarebook currency rebuild`. Kept out of the migration itself, so this
revision never runs application code that later changes could break.

Revision ID: 9b23000e5801
Revises: b5c1e8d3a7f2
Created: 2026-12-02 06:09:34
"""
import sqlalchemy as sa
from alembic import op

revision = '9b23000e5801'
down_revision = 'b5c1e8d3a7f2'
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table('currency_kept_standings',
    sa.Column('pilot_id', sa.Integer(), nullable=False),
    sa.Column('rule_id', sa.Integer(), nullable=False),
    sa.Column('counted_on', sa.Date(), nullable=False),
    sa.Column('dates', sa.JSON(), nullable=False),
    sa.Column('newest_on', sa.Date(), nullable=True),
    sa.Column('current_until', sa.Date(), nullable=True),
    sa.Column('still_counting', sa.Integer(), nullable=False),
    sa.Column('window_count', sa.Integer(), nullable=False),
    sa.Column('counted_through', sa.Date(), nullable=True),
    sa.ForeignKeyConstraint(['pilot_id'], ['people.id'], name=op.f('fk_currency_kept_standings_pilot_id_people'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['rule_id'], ['currency_rules.id'], name=op.f('fk_currency_kept_standings_rule_id_currency_rules'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('pilot_id', 'rule_id', name=op.f('pk_currency_kept_standings'))
    )
    with op.batch_alter_table('currency_kept_standings', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_currency_kept_standings_rule_id'), ['rule_id'], unique=False)


def downgrade() -> None:
    with op.batch_alter_table('currency_kept_standings', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_currency_kept_standings_rule_id'))

    op.drop_table('currency_kept_standings')
