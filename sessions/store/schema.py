"""Tables of the session library (SQLAlchemy 2 declarative mapping).

One schema serves the embedded SQLite file and a shared PostgreSQL database. Every
measurement is stored in SI units with the unit in the column name; times are stored
as UTC (see :class:`UTCDateTime`) and come back tz-aware.

Tables
------
``riders``          name, stance, ability level, gear mass
``rider_masses``    body-mass history of a rider (one row per weighing)
``boards``          dimensions, outline (stations ``[[x_from_nose_m, width_m], ...]`` and
                    how they were obtained), volume, mass, construction, fins, model/version
``sessions``        one imported track: content hash, the file's bytes compressed
                    (``track_codec``: ``gzip`` = we compressed the file, ``as-is`` = the
                    file was already gzip), analysis JSON and
                    its version, session totals, links to rider and board
``rides``           one row per ride of a session (from the analysis)
``states``          the session's time line of states (shore, paddle, wait, ride)
``conditions``      optional sea and weather conditions of a session (one row per session)
``feedback``        a rider's 1-5 scores and note for a session (one row per session)

The physical schema is created by the Alembic migrations in
``sessions/store/migrations``; :data:`Base.metadata` describes the head revision and is
checked against it by the tests.
"""

from __future__ import annotations

import datetime as dt

import sqlalchemy as sa
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship

from sessions.physics.water import PRESETS as _WATER_PRESETS
from sessions.riders import ABILITY_LEVELS as _ABILITY_LEVELS

#: Naming convention so that constraint names are identical on SQLite and PostgreSQL
#: (Alembic needs names to alter constraints later).
NAMING_CONVENTION = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}

STANCES = ("regular", "goofy")
ABILITY_LEVELS = _ABILITY_LEVELS  # from sessions.riders
WATER_PRESETS = tuple(_WATER_PRESETS)  # from sessions.physics.water
TIDE_PHASES = ("low", "rising", "high", "falling")
SCORE_NAMES = ("paddling", "catching", "speed", "control")
STATE_NAMES = ("shore", "paddle", "wait", "ride")


class UTCDateTime(sa.types.TypeDecorator):
    """A point in time stored as naive UTC and returned tz-aware (UTC).

    SQLite has no time-zone type, PostgreSQL's ``timestamptz`` converts to the session
    time zone; storing naive UTC in a plain ``TIMESTAMP`` behaves the same on both.
    Naive input is refused: it is ambiguous.
    """

    impl = sa.DateTime(timezone=False)
    cache_ok = True

    def process_bind_param(self, value, dialect):  # noqa: ARG002
        if value is None:
            return None
        if value.tzinfo is None:
            raise ValueError(f"naive datetime {value!r}: give a time zone (UTC)")
        return value.astimezone(dt.timezone.utc).replace(tzinfo=None)

    def process_result_value(self, value, dialect):  # noqa: ARG002
        if value is None:
            return None
        return value.replace(tzinfo=dt.timezone.utc)


class Base(DeclarativeBase):
    metadata = sa.MetaData(naming_convention=NAMING_CONVENTION)


class Rider(Base):
    __tablename__ = "riders"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(sa.String(120), unique=True)
    stance: Mapped[str | None] = mapped_column(sa.String(16))
    ability: Mapped[str | None] = mapped_column(sa.String(16))
    gear_mass_kg: Mapped[float | None] = mapped_column(sa.Float)
    note: Mapped[str | None] = mapped_column(sa.Text)
    created_at: Mapped[dt.datetime] = mapped_column(UTCDateTime)

    masses: Mapped[list[RiderMass]] = relationship(
        back_populates="rider", cascade="all, delete-orphan", order_by="RiderMass.measured_at"
    )

    __table_args__ = (
        sa.CheckConstraint("gear_mass_kg IS NULL OR gear_mass_kg >= 0", name="gear_mass_nonneg"),
    )


class RiderMass(Base):
    __tablename__ = "rider_masses"

    id: Mapped[int] = mapped_column(primary_key=True)
    rider_id: Mapped[int] = mapped_column(sa.ForeignKey("riders.id", ondelete="CASCADE"), index=True)
    measured_at: Mapped[dt.datetime] = mapped_column(UTCDateTime)
    body_mass_kg: Mapped[float] = mapped_column(sa.Float)

    rider: Mapped[Rider] = relationship(back_populates="masses")

    __table_args__ = (sa.CheckConstraint("body_mass_kg > 0", name="body_mass_pos"),)


class Board(Base):
    __tablename__ = "boards"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(sa.String(120), unique=True)
    model: Mapped[str | None] = mapped_column(sa.String(120))
    version: Mapped[str | None] = mapped_column(sa.String(60))
    length_m: Mapped[float | None] = mapped_column(sa.Float)
    width_m: Mapped[float | None] = mapped_column(sa.Float)
    thickness_m: Mapped[float | None] = mapped_column(sa.Float)
    outline_source: Mapped[str | None] = mapped_column(sa.String(60))
    outline_stations: Mapped[list | None] = mapped_column(sa.JSON)
    volume_l: Mapped[float | None] = mapped_column(sa.Float)
    planform_area_m2: Mapped[float | None] = mapped_column(sa.Float)
    mass_kg: Mapped[float | None] = mapped_column(sa.Float)
    construction: Mapped[str | None] = mapped_column(sa.String(120))
    fins: Mapped[str | None] = mapped_column(sa.String(120))
    note: Mapped[str | None] = mapped_column(sa.Text)
    created_at: Mapped[dt.datetime] = mapped_column(UTCDateTime)

    __table_args__ = (
        sa.CheckConstraint("volume_l IS NULL OR volume_l > 0", name="volume_pos"),
        sa.CheckConstraint("mass_kg IS NULL OR mass_kg > 0", name="mass_pos"),
    )


class Session(Base):
    __tablename__ = "sessions"

    id: Mapped[int] = mapped_column(primary_key=True)
    sha256: Mapped[str] = mapped_column(sa.String(64), unique=True)
    source_file: Mapped[str] = mapped_column(sa.String(400))
    track_blob: Mapped[bytes] = mapped_column(sa.LargeBinary, deferred=True)
    track_codec: Mapped[str] = mapped_column(sa.String(16))
    track_size_b: Mapped[int] = mapped_column(sa.Integer)
    points: Mapped[int] = mapped_column(sa.Integer)
    sampling_s: Mapped[float | None] = mapped_column(sa.Float)
    start: Mapped[dt.datetime] = mapped_column(UTCDateTime, index=True)
    end: Mapped[dt.datetime] = mapped_column(UTCDateTime)
    duration_s: Mapped[float] = mapped_column(sa.Float)
    time_shore_s: Mapped[float] = mapped_column(sa.Float)
    time_paddle_s: Mapped[float] = mapped_column(sa.Float)
    time_wait_s: Mapped[float] = mapped_column(sa.Float)
    time_ride_s: Mapped[float] = mapped_column(sa.Float)
    rides: Mapped[int] = mapped_column(sa.Integer)
    missed_waves: Mapped[int] = mapped_column(sa.Integer)
    rides_per_hour: Mapped[float | None] = mapped_column(sa.Float)
    peak_speed_mps: Mapped[float | None] = mapped_column(sa.Float)
    paddle_distance_m: Mapped[float | None] = mapped_column(sa.Float)
    ride_distance_m: Mapped[float | None] = mapped_column(sa.Float)
    analysis: Mapped[dict] = mapped_column(sa.JSON, deferred=True)
    analysis_version: Mapped[str] = mapped_column(sa.String(40), index=True)
    rider_id: Mapped[int | None] = mapped_column(sa.ForeignKey("riders.id", ondelete="SET NULL"), index=True)
    board_id: Mapped[int | None] = mapped_column(sa.ForeignKey("boards.id", ondelete="SET NULL"), index=True)
    imported_at: Mapped[dt.datetime] = mapped_column(UTCDateTime)
    analysed_at: Mapped[dt.datetime] = mapped_column(UTCDateTime)

    rider: Mapped[Rider | None] = relationship()
    board: Mapped[Board | None] = relationship()
    ride_rows: Mapped[list[Ride]] = relationship(
        back_populates="session", cascade="all, delete-orphan", order_by="Ride.ride_index"
    )
    state_rows: Mapped[list[StateSpan]] = relationship(
        back_populates="session", cascade="all, delete-orphan", order_by="StateSpan.seq"
    )
    conditions: Mapped[Conditions | None] = relationship(
        back_populates="session", cascade="all, delete-orphan", uselist=False
    )
    feedback: Mapped[Feedback | None] = relationship(
        back_populates="session", cascade="all, delete-orphan", uselist=False
    )


class Ride(Base):
    __tablename__ = "rides"

    id: Mapped[int] = mapped_column(primary_key=True)
    session_id: Mapped[int] = mapped_column(sa.ForeignKey("sessions.id", ondelete="CASCADE"), index=True)
    ride_index: Mapped[int] = mapped_column(sa.Integer)
    catch_start: Mapped[dt.datetime | None] = mapped_column(UTCDateTime)
    start: Mapped[dt.datetime] = mapped_column(UTCDateTime)
    end: Mapped[dt.datetime] = mapped_column(UTCDateTime)
    duration_s: Mapped[float] = mapped_column(sa.Float)
    distance_m: Mapped[float] = mapped_column(sa.Float)
    peak_speed_mps: Mapped[float] = mapped_column(sa.Float)
    mean_speed_mps: Mapped[float] = mapped_column(sa.Float)
    onset_speed_mps: Mapped[float | None] = mapped_column(sa.Float)
    onset_ci_lo_mps: Mapped[float | None] = mapped_column(sa.Float)
    onset_ci_hi_mps: Mapped[float | None] = mapped_column(sa.Float)

    session: Mapped[Session] = relationship(back_populates="ride_rows")

    __table_args__ = (sa.UniqueConstraint("session_id", "ride_index", name="uq_rides_session_ride"),)


class StateSpan(Base):
    __tablename__ = "states"

    id: Mapped[int] = mapped_column(primary_key=True)
    session_id: Mapped[int] = mapped_column(sa.ForeignKey("sessions.id", ondelete="CASCADE"), index=True)
    seq: Mapped[int] = mapped_column(sa.Integer)
    state: Mapped[str] = mapped_column(sa.String(16))
    start: Mapped[dt.datetime] = mapped_column(UTCDateTime)
    end: Mapped[dt.datetime] = mapped_column(UTCDateTime)

    session: Mapped[Session] = relationship(back_populates="state_rows")

    __table_args__ = (sa.UniqueConstraint("session_id", "seq", name="uq_states_session_seq"),)


class Conditions(Base):
    __tablename__ = "conditions"

    session_id: Mapped[int] = mapped_column(sa.ForeignKey("sessions.id", ondelete="CASCADE"), primary_key=True)
    wave_face_m: Mapped[float | None] = mapped_column(sa.Float)
    period_s: Mapped[float | None] = mapped_column(sa.Float)
    wind_speed_mps: Mapped[float | None] = mapped_column(sa.Float)
    wind_from_deg: Mapped[float | None] = mapped_column(sa.Float)
    water_temp_c: Mapped[float | None] = mapped_column(sa.Float)
    salinity_g_kg: Mapped[float | None] = mapped_column(sa.Float)
    water_preset: Mapped[str | None] = mapped_column(sa.String(16))
    tide_m: Mapped[float | None] = mapped_column(sa.Float)
    tide_phase: Mapped[str | None] = mapped_column(sa.String(16))
    note: Mapped[str | None] = mapped_column(sa.Text)  # conditions in words ("light offshore")

    session: Mapped[Session] = relationship(back_populates="conditions")

    __table_args__ = (
        sa.CheckConstraint("wave_face_m IS NULL OR wave_face_m >= 0", name="wave_face_nonneg"),
        sa.CheckConstraint("period_s IS NULL OR period_s > 0", name="period_pos"),
    )


class Feedback(Base):
    __tablename__ = "feedback"

    session_id: Mapped[int] = mapped_column(sa.ForeignKey("sessions.id", ondelete="CASCADE"), primary_key=True)
    score_paddling: Mapped[int | None] = mapped_column(sa.Integer)
    score_catching: Mapped[int | None] = mapped_column(sa.Integer)
    score_speed: Mapped[int | None] = mapped_column(sa.Integer)
    score_control: Mapped[int | None] = mapped_column(sa.Integer)
    note: Mapped[str | None] = mapped_column(sa.Text)
    updated_at: Mapped[dt.datetime] = mapped_column(UTCDateTime)

    session: Mapped[Session] = relationship(back_populates="feedback")

    __table_args__ = tuple(
        sa.CheckConstraint(f"score_{n} IS NULL OR (score_{n} BETWEEN 1 AND 5)", name=f"score_{n}_range")
        for n in SCORE_NAMES
    )
