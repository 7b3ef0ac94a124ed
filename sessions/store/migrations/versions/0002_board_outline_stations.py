"""Boards keep their outline as stations (JSON); conditions get a note in words.

Outline stations let the planform area and load be recomputed from the stored board.

The text column ``outline`` becomes ``outline_source`` (how the outline was obtained:
stations, three widths, default); ``outline_stations`` holds ``[[x_from_nose_m,
width_m], ...]``. Existing text is kept in ``outline_source``. ``conditions.note`` holds
conditions given in words (wind "light offshore", tide "mid, rising").

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-01
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0002'
down_revision = '0001'
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table('boards', schema=None) as batch_op:
        batch_op.alter_column('outline', new_column_name='outline_source',
                              existing_type=sa.String(length=60), existing_nullable=True)
        batch_op.add_column(sa.Column('outline_stations', sa.JSON(), nullable=True))
    with op.batch_alter_table('conditions', schema=None) as batch_op:
        batch_op.add_column(sa.Column('note', sa.Text(), nullable=True))


def downgrade() -> None:
    with op.batch_alter_table('conditions', schema=None) as batch_op:
        batch_op.drop_column('note')
    with op.batch_alter_table('boards', schema=None) as batch_op:
        batch_op.drop_column('outline_stations')
        batch_op.alter_column('outline_source', new_column_name='outline',
                              existing_type=sa.String(length=60), existing_nullable=True)
