"""Import batches (issue 14): one row per import of earlier records, and what each imported row became.

Revision ID: e7b41c9d2a63
Revises: d4e7a9c1b3f5
Created: 2026-12-01 22:17:55
"""
import sqlalchemy as sa
from alembic import op

import server.types

revision = 'e7b41c9d2a63'
down_revision = 'd4e7a9c1b3f5'
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table('import_batches',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('kind', sa.String(length=12), nullable=False),
    sa.Column('imported_by_id', sa.Integer(), nullable=False),
    sa.Column('imported_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('file_name', sa.String(length=255), nullable=False),
    sa.Column('file_sha256', sa.String(length=64), nullable=False),
    sa.Column('file_format', sa.String(length=8), nullable=False),
    sa.Column('mapping', sa.JSON(), nullable=False),
    sa.Column('rows', sa.Integer(), nullable=False),
    sa.Column('rows_left_out', sa.Integer(), nullable=False),
    sa.Column('created', sa.JSON(), nullable=False),
    sa.ForeignKeyConstraint(['imported_by_id'], ['people.id'], name=op.f('fk_import_batches_imported_by_id_people')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_import_batches'))
    )
    with op.batch_alter_table('import_batches', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_import_batches_file_sha256'), ['file_sha256'], unique=False)

    op.create_table('imported_records',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('batch_id', sa.Integer(), nullable=False),
    sa.Column('row', sa.Integer(), nullable=False),
    sa.Column('person_id', sa.Integer(), nullable=True),
    sa.Column('sortie_id', sa.Integer(), nullable=True),
    sa.Column('attempt_id', sa.Integer(), nullable=True),
    sa.ForeignKeyConstraint(['attempt_id'], ['attempts.id'], name=op.f('fk_imported_records_attempt_id_attempts'), ondelete='SET NULL'),
    sa.ForeignKeyConstraint(['batch_id'], ['import_batches.id'], name=op.f('fk_imported_records_batch_id_import_batches')),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_imported_records_person_id_people')),
    sa.ForeignKeyConstraint(['sortie_id'], ['sorties.id'], name=op.f('fk_imported_records_sortie_id_sorties')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_imported_records'))
    )
    with op.batch_alter_table('imported_records', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_imported_records_batch_id'), ['batch_id'], unique=False)
        batch_op.create_index(batch_op.f('ix_imported_records_sortie_id'), ['sortie_id'], unique=False)



def downgrade() -> None:
    with op.batch_alter_table('imported_records', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_imported_records_sortie_id'))
        batch_op.drop_index(batch_op.f('ix_imported_records_batch_id'))

    op.drop_table('imported_records')
    with op.batch_alter_table('import_batches', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_import_batches_file_sha256'))

    op.drop_table('import_batches')
