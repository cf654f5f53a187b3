"""Kept board rows carry the time they were written (issue 15).

A board made afresh after a change reads only the rows written since the board before it, with a count
and checksum of every row to prove nothing else moved (`server/currency/today_cells.py`). Rows kept before
this migration read as written at 0, long ago.

Revision ID: c8d2f6a1e9b7
Revises: a3f9c2e71d04
Created: 2026-12-04 19:00:00
"""
import sqlalchemy as sa
from alembic import op

revision = 'c8d2f6a1e9b7'
down_revision = 'a3f9c2e71d04'
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table('currency_kept_standings', schema=None) as batch_op:
        batch_op.add_column(sa.Column('written_at_us', sa.BigInteger(), server_default='0', nullable=False))


def downgrade() -> None:
    with op.batch_alter_table('currency_kept_standings', schema=None) as batch_op:
        batch_op.drop_column('written_at_us')
