"""Baseline: riders, rider masses, boards, sessions, rides, states, conditions, feedback.

Times are naive UTC in plain TIMESTAMP columns (see sessions.store.schema.UTCDateTime).

Revision ID: 0001
Revises: (none)
Create Date: 2026-12-01
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0001'
down_revision = None
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table('boards',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('model', sa.String(length=120), nullable=True),
    sa.Column('version', sa.String(length=60), nullable=True),
    sa.Column('length_m', sa.Float(), nullable=True),
    sa.Column('width_m', sa.Float(), nullable=True),
    sa.Column('thickness_m', sa.Float(), nullable=True),
    sa.Column('outline', sa.String(length=60), nullable=True),
    sa.Column('volume_l', sa.Float(), nullable=True),
    sa.Column('planform_area_m2', sa.Float(), nullable=True),
    sa.Column('mass_kg', sa.Float(), nullable=True),
    sa.Column('construction', sa.String(length=120), nullable=True),
    sa.Column('fins', sa.String(length=120), nullable=True),
    sa.Column('note', sa.Text(), nullable=True),
    sa.Column('created_at', sa.DateTime(), nullable=False),
    sa.CheckConstraint('mass_kg IS NULL OR mass_kg > 0', name=op.f('ck_boards_mass_pos')),
    sa.CheckConstraint('volume_l IS NULL OR volume_l > 0', name=op.f('ck_boards_volume_pos')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_boards')),
    sa.UniqueConstraint('name', name=op.f('uq_boards_name'))
    )
    op.create_table('riders',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=120), nullable=False),
    sa.Column('stance', sa.String(length=16), nullable=True),
    sa.Column('ability', sa.String(length=16), nullable=True),
    sa.Column('gear_mass_kg', sa.Float(), nullable=True),
    sa.Column('note', sa.Text(), nullable=True),
    sa.Column('created_at', sa.DateTime(), nullable=False),
    sa.CheckConstraint('gear_mass_kg IS NULL OR gear_mass_kg >= 0', name=op.f('ck_riders_gear_mass_nonneg')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_riders')),
    sa.UniqueConstraint('name', name=op.f('uq_riders_name'))
    )
    op.create_table('rider_masses',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('rider_id', sa.Integer(), nullable=False),
    sa.Column('measured_at', sa.DateTime(), nullable=False),
    sa.Column('body_mass_kg', sa.Float(), nullable=False),
    sa.CheckConstraint('body_mass_kg > 0', name=op.f('ck_rider_masses_body_mass_pos')),
    sa.ForeignKeyConstraint(['rider_id'], ['riders.id'], name=op.f('fk_rider_masses_rider_id_riders'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_rider_masses'))
    )
    with op.batch_alter_table('rider_masses', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_rider_masses_rider_id'), ['rider_id'], unique=False)

    op.create_table('sessions',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('sha256', sa.String(length=64), nullable=False),
    sa.Column('source_file', sa.String(length=400), nullable=False),
    sa.Column('track_blob', sa.LargeBinary(), nullable=False),
    sa.Column('track_codec', sa.String(length=16), nullable=False),
    sa.Column('track_size_b', sa.Integer(), nullable=False),
    sa.Column('points', sa.Integer(), nullable=False),
    sa.Column('sampling_s', sa.Float(), nullable=True),
    sa.Column('start', sa.DateTime(), nullable=False),
    sa.Column('end', sa.DateTime(), nullable=False),
    sa.Column('duration_s', sa.Float(), nullable=False),
    sa.Column('time_shore_s', sa.Float(), nullable=False),
    sa.Column('time_paddle_s', sa.Float(), nullable=False),
    sa.Column('time_wait_s', sa.Float(), nullable=False),
    sa.Column('time_ride_s', sa.Float(), nullable=False),
    sa.Column('rides', sa.Integer(), nullable=False),
    sa.Column('missed_waves', sa.Integer(), nullable=False),
    sa.Column('rides_per_hour', sa.Float(), nullable=True),
    sa.Column('peak_speed_mps', sa.Float(), nullable=True),
    sa.Column('paddle_distance_m', sa.Float(), nullable=True),
    sa.Column('ride_distance_m', sa.Float(), nullable=True),
    sa.Column('analysis', sa.JSON(), nullable=False),
    sa.Column('analysis_version', sa.String(length=40), nullable=False),
    sa.Column('rider_id', sa.Integer(), nullable=True),
    sa.Column('board_id', sa.Integer(), nullable=True),
    sa.Column('imported_at', sa.DateTime(), nullable=False),
    sa.Column('analysed_at', sa.DateTime(), nullable=False),
    sa.ForeignKeyConstraint(['board_id'], ['boards.id'], name=op.f('fk_sessions_board_id_boards'), ondelete='SET NULL'),
    sa.ForeignKeyConstraint(['rider_id'], ['riders.id'], name=op.f('fk_sessions_rider_id_riders'), ondelete='SET NULL'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_sessions')),
    sa.UniqueConstraint('sha256', name=op.f('uq_sessions_sha256'))
    )
    with op.batch_alter_table('sessions', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_sessions_analysis_version'), ['analysis_version'], unique=False)
        batch_op.create_index(batch_op.f('ix_sessions_board_id'), ['board_id'], unique=False)
        batch_op.create_index(batch_op.f('ix_sessions_rider_id'), ['rider_id'], unique=False)
        batch_op.create_index(batch_op.f('ix_sessions_start'), ['start'], unique=False)

    op.create_table('conditions',
    sa.Column('session_id', sa.Integer(), nullable=False),
    sa.Column('wave_face_m', sa.Float(), nullable=True),
    sa.Column('period_s', sa.Float(), nullable=True),
    sa.Column('wind_speed_mps', sa.Float(), nullable=True),
    sa.Column('wind_from_deg', sa.Float(), nullable=True),
    sa.Column('water_temp_c', sa.Float(), nullable=True),
    sa.Column('salinity_g_kg', sa.Float(), nullable=True),
    sa.Column('water_preset', sa.String(length=16), nullable=True),
    sa.Column('tide_m', sa.Float(), nullable=True),
    sa.Column('tide_phase', sa.String(length=16), nullable=True),
    sa.CheckConstraint('period_s IS NULL OR period_s > 0', name=op.f('ck_conditions_period_pos')),
    sa.CheckConstraint('wave_face_m IS NULL OR wave_face_m >= 0', name=op.f('ck_conditions_wave_face_nonneg')),
    sa.ForeignKeyConstraint(['session_id'], ['sessions.id'], name=op.f('fk_conditions_session_id_sessions'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('session_id', name=op.f('pk_conditions'))
    )
    op.create_table('feedback',
    sa.Column('session_id', sa.Integer(), nullable=False),
    sa.Column('score_paddling', sa.Integer(), nullable=True),
    sa.Column('score_catching', sa.Integer(), nullable=True),
    sa.Column('score_speed', sa.Integer(), nullable=True),
    sa.Column('score_control', sa.Integer(), nullable=True),
    sa.Column('note', sa.Text(), nullable=True),
    sa.Column('updated_at', sa.DateTime(), nullable=False),
    sa.CheckConstraint('score_catching IS NULL OR (score_catching BETWEEN 1 AND 5)', name=op.f('ck_feedback_score_catching_range')),
    sa.CheckConstraint('score_control IS NULL OR (score_control BETWEEN 1 AND 5)', name=op.f('ck_feedback_score_control_range')),
    sa.CheckConstraint('score_paddling IS NULL OR (score_paddling BETWEEN 1 AND 5)', name=op.f('ck_feedback_score_paddling_range')),
    sa.CheckConstraint('score_speed IS NULL OR (score_speed BETWEEN 1 AND 5)', name=op.f('ck_feedback_score_speed_range')),
    sa.ForeignKeyConstraint(['session_id'], ['sessions.id'], name=op.f('fk_feedback_session_id_sessions'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('session_id', name=op.f('pk_feedback'))
    )
    op.create_table('rides',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('session_id', sa.Integer(), nullable=False),
    sa.Column('ride_index', sa.Integer(), nullable=False),
    sa.Column('catch_start', sa.DateTime(), nullable=True),
    sa.Column('start', sa.DateTime(), nullable=False),
    sa.Column('end', sa.DateTime(), nullable=False),
    sa.Column('duration_s', sa.Float(), nullable=False),
    sa.Column('distance_m', sa.Float(), nullable=False),
    sa.Column('peak_speed_mps', sa.Float(), nullable=False),
    sa.Column('mean_speed_mps', sa.Float(), nullable=False),
    sa.Column('onset_speed_mps', sa.Float(), nullable=True),
    sa.Column('onset_ci_lo_mps', sa.Float(), nullable=True),
    sa.Column('onset_ci_hi_mps', sa.Float(), nullable=True),
    sa.ForeignKeyConstraint(['session_id'], ['sessions.id'], name=op.f('fk_rides_session_id_sessions'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_rides')),
    sa.UniqueConstraint('session_id', 'ride_index', name='uq_rides_session_ride')
    )
    with op.batch_alter_table('rides', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_rides_session_id'), ['session_id'], unique=False)

    op.create_table('states',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('session_id', sa.Integer(), nullable=False),
    sa.Column('seq', sa.Integer(), nullable=False),
    sa.Column('state', sa.String(length=16), nullable=False),
    sa.Column('start', sa.DateTime(), nullable=False),
    sa.Column('end', sa.DateTime(), nullable=False),
    sa.ForeignKeyConstraint(['session_id'], ['sessions.id'], name=op.f('fk_states_session_id_sessions'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_states')),
    sa.UniqueConstraint('session_id', 'seq', name='uq_states_session_seq')
    )
    with op.batch_alter_table('states', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_states_session_id'), ['session_id'], unique=False)



def downgrade() -> None:
    with op.batch_alter_table('states', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_states_session_id'))

    op.drop_table('states')
    with op.batch_alter_table('rides', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_rides_session_id'))

    op.drop_table('rides')
    op.drop_table('feedback')
    op.drop_table('conditions')
    with op.batch_alter_table('sessions', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_sessions_start'))
        batch_op.drop_index(batch_op.f('ix_sessions_rider_id'))
        batch_op.drop_index(batch_op.f('ix_sessions_board_id'))
        batch_op.drop_index(batch_op.f('ix_sessions_analysis_version'))

    op.drop_table('sessions')
    with op.batch_alter_table('rider_masses', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_rider_masses_rider_id'))

    op.drop_table('rider_masses')
    op.drop_table('riders')
    op.drop_table('boards')
