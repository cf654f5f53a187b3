"""Enrolments name a check instructor: the one instructor besides the usual one who signs stage checks.

Revision ID: b5c1e8d3a7f2
Revises: d7e2a9c41b83
Created: 2026-12-02 06:30:00
"""
import sqlalchemy as sa
from alembic import op

revision = 'b5c1e8d3a7f2'
down_revision = 'd7e2a9c41b83'
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table('enrolments', schema=None) as batch_op:
        batch_op.add_column(sa.Column('check_instructor_id', sa.Integer(), nullable=True))
        batch_op.create_index(batch_op.f('ix_enrolments_check_instructor_id'), ['check_instructor_id'], unique=False)
        batch_op.create_foreign_key(batch_op.f('fk_enrolments_check_instructor_id_people'), 'people',
                                    ['check_instructor_id'], ['id'])


def downgrade() -> None:
    with op.batch_alter_table('enrolments', schema=None) as batch_op:
        batch_op.drop_constraint(batch_op.f('fk_enrolments_check_instructor_id_people'), type_='foreignkey')
        batch_op.drop_index(batch_op.f('ix_enrolments_check_instructor_id'))
        batch_op.drop_column('check_instructor_id')
