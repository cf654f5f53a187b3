"""Sites can be deactivated: kept for the records flown there, no longer offered for new sorties.

Revision ID: d7e2a9c41b83
Revises: e7b41c9d2a63
Created: 2026-12-01 22:40:00
"""
import sqlalchemy as sa
from alembic import op

revision = 'd7e2a9c41b83'
down_revision = 'e7b41c9d2a63'
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table('sites', schema=None) as batch_op:
        batch_op.add_column(sa.Column('active', sa.Boolean(), nullable=False, server_default=sa.true()))


def downgrade() -> None:
    with op.batch_alter_table('sites', schema=None) as batch_op:
        batch_op.drop_column('active')
