"""Index attempts for the readiness board: per pilot in date order, holding every column its rules test.

Revision ID: c3a1f0b7d2e4
Revises: 58c8ad1b55bd
Created: 2026-12-01 17:32:20
"""
from alembic import op

revision = 'c3a1f0b7d2e4'
down_revision = '58c8ad1b55bd'
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table('attempts', schema=None) as batch_op:
        batch_op.create_index('ix_attempts_currency', ['pilot_id', 'flown_on', 'sortie_id', 'takeover', 'maneuver',
                                                       'termination', 'satisfactory', 'score'], unique=False)


def downgrade() -> None:
    with op.batch_alter_table('attempts', schema=None) as batch_op:
        batch_op.drop_index('ix_attempts_currency')
