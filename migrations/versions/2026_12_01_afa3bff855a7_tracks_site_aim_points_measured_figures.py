"""Recorded tracks kept with their sortie; sites gain an aim point; attempts say which figures were measured.

Revision ID: afa3bff855a7
Revises: c3a1f0b7d2e4
Created: 2026-12-01 22:27:49
"""
import sqlalchemy as sa
from alembic import op

import server.types

revision = 'afa3bff855a7'
down_revision = 'c3a1f0b7d2e4'
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table('tracks',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('sortie_id', sa.Integer(), nullable=False),
    sa.Column('filename', sa.String(length=255), nullable=False),
    sa.Column('format', sa.String(length=8), nullable=False),
    sa.Column('sha256', sa.String(length=64), nullable=False),
    sa.Column('size_bytes', sa.Integer(), nullable=False),
    sa.Column('raw', sa.LargeBinary(), nullable=False),
    sa.Column('points', sa.Integer(), nullable=False),
    sa.Column('sample_rate_hz', sa.Float(), nullable=False),
    sa.Column('started_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('ended_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('has_doppler_speed', sa.Boolean(), nullable=False),
    sa.Column('ground_ref', sa.String(length=24), nullable=False),
    sa.Column('detections', sa.JSON(), nullable=False),
    sa.Column('notes', sa.JSON(), nullable=False),
    sa.Column('uploaded_by_id', sa.Integer(), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['sortie_id'], ['sorties.id'], name=op.f('fk_tracks_sortie_id_sorties'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['uploaded_by_id'], ['people.id'], name=op.f('fk_tracks_uploaded_by_id_people')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_tracks'))
    )
    with op.batch_alter_table('tracks', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_tracks_sortie_id'), ['sortie_id'], unique=False)

    with op.batch_alter_table('attempts', schema=None) as batch_op:
        # Attempts logged before tracks existed measured nothing.
        batch_op.add_column(sa.Column('measured', sa.JSON(), nullable=False, server_default=sa.text("'{}'")))

    with op.batch_alter_table('sites', schema=None) as batch_op:
        batch_op.add_column(sa.Column('aim_lat_deg', sa.Float(), nullable=True))
        batch_op.add_column(sa.Column('aim_lon_deg', sa.Float(), nullable=True))



def downgrade() -> None:
    with op.batch_alter_table('sites', schema=None) as batch_op:
        batch_op.drop_column('aim_lon_deg')
        batch_op.drop_column('aim_lat_deg')

    with op.batch_alter_table('attempts', schema=None) as batch_op:
        batch_op.drop_column('measured')

    with op.batch_alter_table('tracks', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_tracks_sortie_id'))

    op.drop_table('tracks')
