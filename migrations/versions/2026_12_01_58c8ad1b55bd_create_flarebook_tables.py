"""create flarebook tables

Revision ID: 58c8ad1b55bd
Revises: 
Created: 2026-12-01 17:06:34.250716
"""
from alembic import op
import sqlalchemy as sa


import server.types

revision = '58c8ad1b55bd'
down_revision = None
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table('currency_rules',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('applies_to_roles', sa.JSON(), nullable=False),
    sa.Column('applies_to_people', sa.JSON(), nullable=False),
    sa.Column('maneuvers', sa.JSON(), nullable=False),
    sa.Column('terminations', sa.JSON(), nullable=False),
    sa.Column('type_ids', sa.JSON(), nullable=False),
    sa.Column('with_instructor', sa.Boolean(), nullable=True),
    sa.Column('min_score', sa.Float(), nullable=True),
    sa.Column('require_satisfactory', sa.Boolean(), nullable=False),
    sa.Column('window_days', sa.Integer(), nullable=True),
    sa.Column('window_months', sa.Integer(), nullable=True),
    sa.Column('min_count', sa.Integer(), nullable=False),
    sa.Column('warn_days', sa.Integer(), nullable=False),
    sa.Column('active', sa.Boolean(), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_currency_rules'))
    )
    op.create_table('helicopter_types',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('designation', sa.String(length=60), nullable=False),
    sa.Column('rotor_radius_ft', sa.Float(), nullable=False),
    sa.Column('blade_count', sa.Integer(), nullable=False),
    sa.Column('rotor_inertia_slug_ft2', sa.Float(), nullable=True),
    sa.Column('normal_rotor_rpm', sa.Float(), nullable=False),
    sa.Column('nr_power_off_min_pct', sa.Float(), nullable=False),
    sa.Column('nr_power_off_max_pct', sa.Float(), nullable=False),
    sa.Column('autorotation_kias', sa.Float(), nullable=False),
    sa.Column('reference_weight_lb', sa.Float(), nullable=False),
    sa.Column('flare_band_low_ft', sa.Float(), nullable=False),
    sa.Column('flare_band_high_ft', sa.Float(), nullable=False),
    sa.Column('touchdown_speed_max_kt', sa.Float(), nullable=False),
    sa.Column('hv_avoid', sa.JSON(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_helicopter_types')),
    sa.UniqueConstraint('designation', name=op.f('uq_helicopter_types_designation'))
    )
    op.create_table('people',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('email', sa.String(length=254), nullable=False),
    sa.Column('password_hash', sa.String(length=255), nullable=False),
    sa.Column('active', sa.Boolean(), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_people')),
    sa.UniqueConstraint('email', name=op.f('uq_people_email'))
    )
    op.create_table('programs',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('level', sa.String(length=40), nullable=False),
    sa.Column('description', sa.Text(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_programs')),
    sa.UniqueConstraint('name', name=op.f('uq_programs_name'))
    )
    op.create_table('school',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('timezone', sa.String(length=64), nullable=False),
    sa.Column('demo', sa.Boolean(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_school'))
    )
    op.create_table('sign_in_failures',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('email', sa.String(length=254), nullable=False),
    sa.Column('client', sa.String(length=64), nullable=False),
    sa.Column('at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('count', sa.Integer(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_sign_in_failures'))
    )
    with op.batch_alter_table('sign_in_failures', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_sign_in_failures_at'), ['at'], unique=False)
        batch_op.create_index(batch_op.f('ix_sign_in_failures_email'), ['email'], unique=False)

    op.create_table('sites',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('elevation_ft', sa.Float(), nullable=False),
    sa.Column('landing_dirs_deg', sa.JSON(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_sites')),
    sa.UniqueConstraint('name', name=op.f('uq_sites_name'))
    )
    op.create_table('standards',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('level', sa.String(length=40), nullable=False),
    sa.Column('maneuver', sa.String(length=20), nullable=True),
    sa.Column('airspeed_tol_kt', sa.Float(), nullable=False),
    sa.Column('touchdown_speed_max_kt', sa.Float(), nullable=True),
    sa.Column('touchdown_point_ft', sa.Float(), nullable=False),
    sa.Column('heading_tol_deg', sa.Float(), nullable=False),
    sa.Column('consecutive_needed', sa.Integer(), nullable=False),
    sa.Column('threshold', sa.Float(), nullable=False),
    sa.Column('decay_days', sa.Integer(), nullable=False),
    sa.Column('weights', sa.JSON(), nullable=False),
    sa.Column('active', sa.Boolean(), nullable=False),
    sa.Column('supersedes_id', sa.Integer(), nullable=True),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['supersedes_id'], ['standards.id'], name=op.f('fk_standards_supersedes_id_standards')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_standards'))
    )
    op.create_table('aircraft',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('registration', sa.String(length=20), nullable=False),
    sa.Column('type_id', sa.Integer(), nullable=False),
    sa.Column('active', sa.Boolean(), nullable=False),
    sa.ForeignKeyConstraint(['type_id'], ['helicopter_types.id'], name=op.f('fk_aircraft_type_id_helicopter_types')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_aircraft')),
    sa.UniqueConstraint('registration', name=op.f('uq_aircraft_registration'))
    )
    with op.batch_alter_table('aircraft', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_aircraft_type_id'), ['type_id'], unique=False)

    op.create_table('api_tokens',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('person_id', sa.Integer(), nullable=False),
    sa.Column('token_sha256', sa.String(length=64), nullable=False),
    sa.Column('label', sa.String(length=120), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('revoked_at', server.types.UTCDateTime(timezone=True), nullable=True),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_api_tokens_person_id_people'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_api_tokens')),
    sa.UniqueConstraint('token_sha256', name=op.f('uq_api_tokens_token_sha256'))
    )
    with op.batch_alter_table('api_tokens', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_api_tokens_person_id'), ['person_id'], unique=False)

    op.create_table('audit_events',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('seq', sa.Integer(), nullable=False),
    sa.Column('at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('actor_id', sa.Integer(), nullable=True),
    sa.Column('action', sa.String(length=40), nullable=False),
    sa.Column('entity', sa.String(length=40), nullable=False),
    sa.Column('entity_id', sa.String(length=40), nullable=True),
    sa.Column('before', sa.JSON(), nullable=True),
    sa.Column('after', sa.JSON(), nullable=True),
    sa.Column('reason', sa.Text(), nullable=True),
    sa.Column('prev_hash', sa.String(length=64), nullable=False),
    sa.Column('hash', sa.String(length=64), nullable=False),
    sa.ForeignKeyConstraint(['actor_id'], ['people.id'], name=op.f('fk_audit_events_actor_id_people')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_audit_events')),
    sa.UniqueConstraint('seq', name=op.f('uq_audit_events_seq'))
    )
    op.create_table('calendar_feeds',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('owner_id', sa.Integer(), nullable=False),
    sa.Column('person_id', sa.Integer(), nullable=True),
    sa.Column('token_sha256', sa.String(length=64), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('revoked_at', server.types.UTCDateTime(timezone=True), nullable=True),
    sa.ForeignKeyConstraint(['owner_id'], ['people.id'], name=op.f('fk_calendar_feeds_owner_id_people'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_calendar_feeds_person_id_people'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_calendar_feeds')),
    sa.UniqueConstraint('token_sha256', name=op.f('uq_calendar_feeds_token_sha256'))
    )
    with op.batch_alter_table('calendar_feeds', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_calendar_feeds_owner_id'), ['owner_id'], unique=False)

    op.create_table('enrolments',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('program_id', sa.Integer(), nullable=False),
    sa.Column('student_id', sa.Integer(), nullable=False),
    sa.Column('instructor_id', sa.Integer(), nullable=True),
    sa.Column('started_on', sa.Date(), nullable=False),
    sa.Column('active', sa.Boolean(), nullable=False),
    sa.ForeignKeyConstraint(['instructor_id'], ['people.id'], name=op.f('fk_enrolments_instructor_id_people')),
    sa.ForeignKeyConstraint(['program_id'], ['programs.id'], name=op.f('fk_enrolments_program_id_programs')),
    sa.ForeignKeyConstraint(['student_id'], ['people.id'], name=op.f('fk_enrolments_student_id_people')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_enrolments'))
    )
    with op.batch_alter_table('enrolments', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_enrolments_instructor_id'), ['instructor_id'], unique=False)
        batch_op.create_index(batch_op.f('ix_enrolments_program_id'), ['program_id'], unique=False)
        batch_op.create_index(batch_op.f('ix_enrolments_student_id'), ['student_id'], unique=False)

    op.create_table('idempotency_keys',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('person_id', sa.Integer(), nullable=False),
    sa.Column('key', sa.String(length=255), nullable=False),
    sa.Column('request_sha256', sa.String(length=64), nullable=False),
    sa.Column('status_code', sa.Integer(), nullable=False),
    sa.Column('response_body', sa.Text(), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_idempotency_keys_person_id_people'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_idempotency_keys')),
    sa.UniqueConstraint('person_id', 'key', name=op.f('uq_idempotency_keys_person_id'))
    )
    op.create_table('person_roles',
    sa.Column('person_id', sa.Integer(), nullable=False),
    sa.Column('role', sa.String(length=20), nullable=False),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_person_roles_person_id_people'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('person_id', 'role', name=op.f('pk_person_roles'))
    )
    op.create_table('stages',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('program_id', sa.Integer(), nullable=False),
    sa.Column('position', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.ForeignKeyConstraint(['program_id'], ['programs.id'], name=op.f('fk_stages_program_id_programs'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_stages'))
    )
    with op.batch_alter_table('stages', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_stages_program_id'), ['program_id'], unique=False)

    op.create_table('user_sessions',
    sa.Column('id', sa.String(length=64), nullable=False),
    sa.Column('person_id', sa.Integer(), nullable=True),
    sa.Column('csrf_token', sa.String(length=64), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('last_seen_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('ended_at', server.types.UTCDateTime(timezone=True), nullable=True),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_user_sessions_person_id_people'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_user_sessions'))
    )
    with op.batch_alter_table('user_sessions', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_user_sessions_person_id'), ['person_id'], unique=False)

    op.create_table('lessons',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('stage_id', sa.Integer(), nullable=False),
    sa.Column('position', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.ForeignKeyConstraint(['stage_id'], ['stages.id'], name=op.f('fk_lessons_stage_id_stages'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_lessons'))
    )
    with op.batch_alter_table('lessons', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_lessons_stage_id'), ['stage_id'], unique=False)

    op.create_table('sorties',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('version', sa.Integer(), nullable=False),
    sa.Column('supersedes_id', sa.Integer(), nullable=True),
    sa.Column('amendment_reason', sa.Text(), nullable=True),
    sa.Column('state', sa.String(length=12), nullable=False),
    sa.Column('flown_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('aircraft_id', sa.Integer(), nullable=False),
    sa.Column('instructor_id', sa.Integer(), nullable=True),
    sa.Column('pilot_id', sa.Integer(), nullable=False),
    sa.Column('site_id', sa.Integer(), nullable=False),
    sa.Column('wind_dir_deg', sa.Float(), nullable=True),
    sa.Column('wind_kt', sa.Float(), nullable=True),
    sa.Column('gust_kt', sa.Float(), nullable=True),
    sa.Column('oat_c', sa.Float(), nullable=True),
    sa.Column('altimeter_hpa', sa.Float(), nullable=True),
    sa.Column('altimeter_unit', sa.String(length=4), nullable=False),
    sa.Column('metar', sa.Text(), nullable=True),
    sa.Column('takeoff_weight_lb', sa.Float(), nullable=True),
    sa.Column('remarks', sa.Text(), nullable=False),
    sa.Column('pressure_altitude_ft', sa.Float(), nullable=True),
    sa.Column('density_altitude_ft', sa.Float(), nullable=True),
    sa.Column('density_ratio', sa.Float(), nullable=True),
    sa.Column('created_by_id', sa.Integer(), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.Column('updated_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['aircraft_id'], ['aircraft.id'], name=op.f('fk_sorties_aircraft_id_aircraft')),
    sa.ForeignKeyConstraint(['created_by_id'], ['people.id'], name=op.f('fk_sorties_created_by_id_people')),
    sa.ForeignKeyConstraint(['instructor_id'], ['people.id'], name=op.f('fk_sorties_instructor_id_people')),
    sa.ForeignKeyConstraint(['pilot_id'], ['people.id'], name=op.f('fk_sorties_pilot_id_people')),
    sa.ForeignKeyConstraint(['site_id'], ['sites.id'], name=op.f('fk_sorties_site_id_sites')),
    sa.ForeignKeyConstraint(['supersedes_id'], ['sorties.id'], name=op.f('fk_sorties_supersedes_id_sorties')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_sorties')),
    sa.UniqueConstraint('supersedes_id', name=op.f('uq_sorties_supersedes_id'))
    )
    with op.batch_alter_table('sorties', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_sorties_instructor_id'), ['instructor_id'], unique=False)
        batch_op.create_index(batch_op.f('ix_sorties_pilot_id'), ['pilot_id'], unique=False)

    op.create_table('stage_checks',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('enrolment_id', sa.Integer(), nullable=False),
    sa.Column('stage_id', sa.Integer(), nullable=False),
    sa.Column('checker_id', sa.Integer(), nullable=False),
    sa.Column('passed', sa.Boolean(), nullable=False),
    sa.Column('remarks', sa.Text(), nullable=False),
    sa.Column('signed_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['checker_id'], ['people.id'], name=op.f('fk_stage_checks_checker_id_people')),
    sa.ForeignKeyConstraint(['enrolment_id'], ['enrolments.id'], name=op.f('fk_stage_checks_enrolment_id_enrolments'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['stage_id'], ['stages.id'], name=op.f('fk_stage_checks_stage_id_stages')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_stage_checks'))
    )
    with op.batch_alter_table('stage_checks', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_stage_checks_enrolment_id'), ['enrolment_id'], unique=False)

    op.create_table('attempts',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('sortie_id', sa.Integer(), nullable=False),
    sa.Column('sequence', sa.Integer(), nullable=False),
    sa.Column('pilot_id', sa.Integer(), nullable=False),
    sa.Column('flown_on', sa.Date(), nullable=False),
    sa.Column('maneuver', sa.String(length=20), nullable=False),
    sa.Column('termination', sa.String(length=20), nullable=False),
    sa.Column('landing_dir_deg', sa.Float(), nullable=True),
    sa.Column('entry_height_ft', sa.Float(), nullable=True),
    sa.Column('entry_kias', sa.Float(), nullable=True),
    sa.Column('descent_kias', sa.Float(), nullable=True),
    sa.Column('nr_low_pct', sa.Float(), nullable=True),
    sa.Column('nr_high_pct', sa.Float(), nullable=True),
    sa.Column('flare_height_ft', sa.Float(), nullable=True),
    sa.Column('touchdown_speed_kt', sa.Float(), nullable=True),
    sa.Column('point_error_ft', sa.Float(), nullable=True),
    sa.Column('heading_error_deg', sa.Float(), nullable=True),
    sa.Column('takeover', sa.Boolean(), nullable=False),
    sa.Column('grade', sa.String(length=16), nullable=True),
    sa.Column('remarks', sa.Text(), nullable=False),
    sa.Column('standard_id', sa.Integer(), nullable=True),
    sa.Column('headwind_kt', sa.Float(), nullable=True),
    sa.Column('crosswind_kt', sa.Float(), nullable=True),
    sa.Column('flare_band_low_ft', sa.Float(), nullable=True),
    sa.Column('flare_band_high_ft', sa.Float(), nullable=True),
    sa.Column('score', sa.Float(), nullable=True),
    sa.Column('parts', sa.JSON(), nullable=False),
    sa.Column('flags', sa.JSON(), nullable=False),
    sa.Column('satisfactory', sa.Boolean(), nullable=False),
    sa.Column('within_tolerances', sa.Boolean(), nullable=False),
    sa.Column('created_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['pilot_id'], ['people.id'], name=op.f('fk_attempts_pilot_id_people')),
    sa.ForeignKeyConstraint(['sortie_id'], ['sorties.id'], name=op.f('fk_attempts_sortie_id_sorties'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['standard_id'], ['standards.id'], name=op.f('fk_attempts_standard_id_standards')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_attempts'))
    )
    with op.batch_alter_table('attempts', schema=None) as batch_op:
        batch_op.create_index('ix_attempts_pilot_maneuver_date', ['pilot_id', 'maneuver', 'termination', 'flown_on'], unique=False)
        batch_op.create_index(batch_op.f('ix_attempts_sortie_id'), ['sortie_id'], unique=False)

    op.create_table('lesson_completions',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('enrolment_id', sa.Integer(), nullable=False),
    sa.Column('lesson_id', sa.Integer(), nullable=False),
    sa.Column('confirmed_by_id', sa.Integer(), nullable=False),
    sa.Column('confirmed_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['confirmed_by_id'], ['people.id'], name=op.f('fk_lesson_completions_confirmed_by_id_people')),
    sa.ForeignKeyConstraint(['enrolment_id'], ['enrolments.id'], name=op.f('fk_lesson_completions_enrolment_id_enrolments'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['lesson_id'], ['lessons.id'], name=op.f('fk_lesson_completions_lesson_id_lessons')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_lesson_completions'))
    )
    with op.batch_alter_table('lesson_completions', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_lesson_completions_enrolment_id'), ['enrolment_id'], unique=False)

    op.create_table('lesson_requirements',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('lesson_id', sa.Integer(), nullable=False),
    sa.Column('maneuver', sa.String(length=20), nullable=False),
    sa.Column('termination', sa.String(length=20), nullable=False),
    sa.Column('standard_id', sa.Integer(), nullable=True),
    sa.Column('attempts_needed', sa.Integer(), nullable=False),
    sa.ForeignKeyConstraint(['lesson_id'], ['lessons.id'], name=op.f('fk_lesson_requirements_lesson_id_lessons'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['standard_id'], ['standards.id'], name=op.f('fk_lesson_requirements_standard_id_standards')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_lesson_requirements'))
    )
    with op.batch_alter_table('lesson_requirements', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_lesson_requirements_lesson_id'), ['lesson_id'], unique=False)

    op.create_table('signatures',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('sortie_id', sa.Integer(), nullable=False),
    sa.Column('signer_id', sa.Integer(), nullable=False),
    sa.Column('meaning', sa.String(length=32), nullable=False),
    sa.Column('statement', sa.Text(), nullable=False),
    sa.Column('content_sha256', sa.String(length=64), nullable=False),
    sa.Column('signed_at', server.types.UTCDateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['signer_id'], ['people.id'], name=op.f('fk_signatures_signer_id_people')),
    sa.ForeignKeyConstraint(['sortie_id'], ['sorties.id'], name=op.f('fk_signatures_sortie_id_sorties')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_signatures'))
    )
    with op.batch_alter_table('signatures', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_signatures_sortie_id'), ['sortie_id'], unique=False)



def downgrade() -> None:
    with op.batch_alter_table('signatures', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_signatures_sortie_id'))

    op.drop_table('signatures')
    with op.batch_alter_table('lesson_requirements', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_lesson_requirements_lesson_id'))

    op.drop_table('lesson_requirements')
    with op.batch_alter_table('lesson_completions', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_lesson_completions_enrolment_id'))

    op.drop_table('lesson_completions')
    with op.batch_alter_table('attempts', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_attempts_sortie_id'))
        batch_op.drop_index('ix_attempts_pilot_maneuver_date')

    op.drop_table('attempts')
    with op.batch_alter_table('stage_checks', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_stage_checks_enrolment_id'))

    op.drop_table('stage_checks')
    with op.batch_alter_table('sorties', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_sorties_pilot_id'))
        batch_op.drop_index(batch_op.f('ix_sorties_instructor_id'))

    op.drop_table('sorties')
    with op.batch_alter_table('lessons', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_lessons_stage_id'))

    op.drop_table('lessons')
    with op.batch_alter_table('user_sessions', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_user_sessions_person_id'))

    op.drop_table('user_sessions')
    with op.batch_alter_table('stages', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_stages_program_id'))

    op.drop_table('stages')
    op.drop_table('person_roles')
    op.drop_table('idempotency_keys')
    with op.batch_alter_table('enrolments', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_enrolments_student_id'))
        batch_op.drop_index(batch_op.f('ix_enrolments_program_id'))
        batch_op.drop_index(batch_op.f('ix_enrolments_instructor_id'))

    op.drop_table('enrolments')
    with op.batch_alter_table('calendar_feeds', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_calendar_feeds_owner_id'))

    op.drop_table('calendar_feeds')
    op.drop_table('audit_events')
    with op.batch_alter_table('api_tokens', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_api_tokens_person_id'))

    op.drop_table('api_tokens')
    with op.batch_alter_table('aircraft', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_aircraft_type_id'))

    op.drop_table('aircraft')
    op.drop_table('standards')
    op.drop_table('sites')
    with op.batch_alter_table('sign_in_failures', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_sign_in_failures_email'))
        batch_op.drop_index(batch_op.f('ix_sign_in_failures_at'))

    op.drop_table('sign_in_failures')
    op.drop_table('school')
    op.drop_table('programs')
    op.drop_table('people')
    op.drop_table('helicopter_types')
    op.drop_table('currency_rules')
