"""The readiness board's version token: today's board is kept in memory while it stands (issue 15).

One row, with a random token that every change the board shows writes anew in its own transaction
(`server/currency/board_cache.py`).

Revision ID: a3f9c2e71d04
Revises: 9b23000e5801
Created: 2026-12-02 19:35:00
"""
import uuid

import sqlalchemy as sa
from alembic import op

revision = 'a3f9c2e71d04'
down_revision = '9b23000e5801'
branch_labels = None
depends_on = None


def upgrade() -> None:
    table = op.create_table('currency_board_version',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('token', sa.String(length=32), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_currency_board_version'))
    )
    op.bulk_insert(table, [{"id": 1, "token": uuid.uuid4().hex}])


def downgrade() -> None:
    op.drop_table('currency_board_version')
