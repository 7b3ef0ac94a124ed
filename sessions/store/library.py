"""The :class:`Library`: riders, boards and analysed sessions kept in a database.

This is the one API through which the command line, the dashboard and the comparison
engine read and write the library. Every public write runs in its own transaction, so
a crash leaves either the whole change or none of it. Only SQLAlchemy expressions are
used (all values are bound parameters).

Query frames (pandas) for analysis: :meth:`Library.rides_frame` (one row per ride) and
:meth:`Library.sessions_frame` (one row per session); their columns are listed in
:data:`RIDES_COLUMNS` and :data:`SESSIONS_COLUMNS`. Missing values are NaN (None for
text); times are tz-aware UTC.
"""

from __future__ import annotations

import bisect
import datetime as dt
import gzip
import hashlib
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

import pandas as pd
import sqlalchemy as sa
from sqlalchemy.orm import Session as OrmSession
from sqlalchemy.orm import selectinload, sessionmaker

from sessions import boards as _boards
from sessions import riders as _riders
from sessions.errors import (
    AnalysisError,
    BoardSpecError,
    LibraryInputError,
    NotFoundError,
    RiderSpecError,
    StoreError,
)
from sessions.store import db
from sessions.store.schema import (
    ABILITY_LEVELS,
    SCORE_NAMES,
    STANCES,
    TIDE_PHASES,
    WATER_PRESETS,
    Board,
    Conditions,
    Feedback,
    Ride,
    Rider,
    RiderMass,
    Session,
    StateSpan,
)

ANALYSIS_SCHEMA = "floatlift.analysis/1"

#: Columns of :meth:`Library.rides_frame`, in order.
RIDES_COLUMNS = (
    "session_id", "ride_index", "rider", "board", "board_model", "board_version",
    "session_start", "start", "onset_speed_mps", "onset_ci_lo_mps", "onset_ci_hi_mps",
    "duration_s", "distance_m", "peak_speed_mps", "mean_speed_mps", "wave_face_m",
    "period_s", "rider_body_mass_kg", "rider_gear_mass_kg", "board_mass_kg",
    "board_volume_l", "planform_area_m2",
)
#: Columns of :meth:`Library.sessions_frame`, in order.
SESSIONS_COLUMNS = (
    "session_id", "sha256", "rider", "board", "board_model", "board_version", "start",
    "duration_s", "time_paddle_s", "time_wait_s", "time_ride_s", "rides", "missed_waves",
    "rides_per_hour", "wave_face_m", "period_s", "rider_body_mass_kg",
    "rider_gear_mass_kg", "board_mass_kg", "board_volume_l", "planform_area_m2",
    "score_paddling", "score_catching", "score_speed", "score_control", "feedback_note",
)
_TEXT_COLUMNS = {"rider", "board", "board_model", "board_version", "sha256", "feedback_note"}
_INT_COLUMNS = {"session_id", "ride_index", "rides", "missed_waves"}
_TIME_COLUMNS = {"session_start", "start"}

#: Plausible ranges of the conditions fields (inclusive), to catch unit mistakes.
CONDITION_RANGES: dict[str, tuple[float, float]] = {
    "wave_face_m": (0.0, 30.0),
    "period_s": (1.0, 30.0),
    "wind_speed_mps": (0.0, 60.0),
    "wind_from_deg": (0.0, 360.0),
    "water_temp_c": (-2.5, 40.0),
    "salinity_g_kg": (0.0, 50.0),
    "tide_m": (-15.0, 20.0),
}
CONDITION_FIELDS = (*CONDITION_RANGES, "water_preset", "tide_phase", "note")

_UNSET: Any = object()


def _now() -> dt.datetime:
    return dt.datetime.now(dt.timezone.utc)


class Library:
    """A session library in a SQLite file or a PostgreSQL database.

    Open with :meth:`Library.open`; use as a context manager or call :meth:`close`.
    """

    def __init__(self, engine: sa.Engine):
        self.engine = engine
        self._sessions = sessionmaker(engine, expire_on_commit=False)

    # --- opening ---------------------------------------------------------------------
    @classmethod
    def open(cls, url: str | None = None, *, migrate: bool = True) -> Library:
        """Open (and by default create or upgrade) the library at *url*.

        *url* defaults to ``$FLOATLIFT_DB`` or the embedded SQLite file
        (:func:`sessions.store.db.resolve_url`).

        Raises
        ------
        StoreError
            The database cannot be reached or is not a floatlift library of a known
            schema revision. The message shows the URL with the password masked.
        """
        engine = db.make_engine(url)
        try:
            db.check_revision(engine)
            if migrate:
                db.migrate(engine)
            elif db.current_revision(engine) != db.head_revision():
                raise StoreError(f"the library at {db.mask_url(engine.url)} needs an upgrade")
        except sa.exc.SQLAlchemyError as exc:
            engine.dispose()
            raise StoreError(f"cannot open the library at {db.mask_url(engine.url)}: {db._short(exc)}") from exc
        except BaseException:
            engine.dispose()
            raise
        return cls(engine)

    @property
    def url(self) -> str:
        """The database URL with the password masked."""
        return db.mask_url(self.engine.url)

    def close(self) -> None:
        self.engine.dispose()

    def __enter__(self) -> Library:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def _tx(self) -> OrmSession:
        """A new ORM session; use as ``with self._tx() as s, s.begin(): ...``."""
        return self._sessions()

    # --- riders ------------------------------------------------------------------------
    def add_rider(
        self,
        name: str,
        *,
        body_mass_kg: float | None = None,
        stance: str | None = None,
        ability: str | None = None,
        gear_mass_kg: float | None = None,
        note: str | None = None,
        measured_at: dt.datetime | None = None,
    ) -> dict:
        """Add a rider; *body_mass_kg* starts the mass history. Returns :meth:`rider`."""
        name = _clean_name(name, "rider")
        _check_rider_fields(stance, ability, gear_mass_kg, body_mass_kg)
        now = _now()
        with self._tx() as s:
            try:
                with s.begin():
                    if s.scalar(sa.select(Rider.id).where(Rider.name == name)) is not None:
                        raise LibraryInputError(f"rider {name!r} already exists (change it with 'floatlift rider edit')")
                    rider = Rider(name=name, stance=stance, ability=ability, gear_mass_kg=gear_mass_kg,
                                  note=note, created_at=now)
                    if body_mass_kg is not None:
                        rider.masses.append(RiderMass(measured_at=_aware(measured_at) or now,
                                                      body_mass_kg=float(body_mass_kg)))
                    s.add(rider)
            except sa.exc.IntegrityError as exc:
                raise LibraryInputError(f"rider {name!r} already exists") from exc
        return self.rider(name)

    def edit_rider(
        self,
        name: str,
        *,
        new_name: str | None = None,
        body_mass_kg: float | None = None,
        measured_at: dt.datetime | None = None,
        stance: str | None = _UNSET,
        ability: str | None = _UNSET,
        gear_mass_kg: float | None = _UNSET,
        note: str | None = _UNSET,
    ) -> dict:
        """Change a rider. A new *body_mass_kg* is added to the history (old ones are kept)."""
        _check_rider_fields(None if stance is _UNSET else stance, None if ability is _UNSET else ability,
                            None if gear_mass_kg is _UNSET else gear_mass_kg, body_mass_kg)
        with self._tx() as s, s.begin():
            rider = _get_rider(s, name)
            _rename(s, rider, new_name, "rider")
            for attr, value in (("stance", stance), ("ability", ability), ("gear_mass_kg", gear_mass_kg),
                                ("note", note)):
                if value is not _UNSET:
                    setattr(rider, attr, value)
            if body_mass_kg is not None:
                rider.masses.append(RiderMass(measured_at=_aware(measured_at) or _now(),
                                              body_mass_kg=float(body_mass_kg)))
            final = rider.name
        return self.rider(final)

    def rider(self, name: str) -> dict:
        """One rider with the mass history (oldest first) and the number of sessions."""
        with self._tx() as s:
            r = _get_rider(s, name)
            n = s.scalar(sa.select(sa.func.count(Session.id)).where(Session.rider_id == r.id))
            return _rider_dict(r, n)

    def riders(self) -> list[dict]:
        """All riders, by name."""
        with self._tx() as s:
            counts = dict(s.execute(sa.select(Session.rider_id, sa.func.count(Session.id))
                                    .group_by(Session.rider_id)).all())
            return [_rider_dict(r, counts.get(r.id, 0))
                    for r in s.scalars(sa.select(Rider).order_by(Rider.name))]

    # --- boards ------------------------------------------------------------------------
    BOARD_FIELDS = ("model", "version", "length_m", "width_m", "thickness_m", "outline_source",
                    "outline_stations", "volume_l", "planform_area_m2", "mass_kg", "construction", "fins",
                    "note")

    def add_board(self, name: str, **fields: Any) -> dict:
        """Add a board. Fields (all optional): see :attr:`BOARD_FIELDS` (SI units, litres)."""
        name = _clean_name(name, "board")
        _check_board_fields(fields, self.BOARD_FIELDS)
        with self._tx() as s:
            try:
                with s.begin():
                    if s.scalar(sa.select(Board.id).where(Board.name == name)) is not None:
                        raise LibraryInputError(f"board {name!r} already exists (change it with 'floatlift board edit')")
                    s.add(Board(name=name, created_at=_now(), **fields))
            except sa.exc.IntegrityError as exc:
                raise LibraryInputError(f"board {name!r} already exists") from exc
        return self.board(name)

    def edit_board(self, name: str, *, new_name: str | None = None, **fields: Any) -> dict:
        """Change the given fields of a board (others are kept)."""
        _check_board_fields(fields, self.BOARD_FIELDS)
        with self._tx() as s, s.begin():
            board = _get_board(s, name)
            _rename(s, board, new_name, "board")
            for attr, value in fields.items():
                setattr(board, attr, value)
            final = board.name
        return self.board(final)

    def board(self, name: str) -> dict:
        with self._tx() as s:
            b = _get_board(s, name)
            n = s.scalar(sa.select(sa.func.count(Session.id)).where(Session.board_id == b.id))
            return _board_dict(b, n)

    def boards(self) -> list[dict]:
        with self._tx() as s:
            counts = dict(s.execute(sa.select(Session.board_id, sa.func.count(Session.id))
                                    .group_by(Session.board_id)).all())
            return [_board_dict(b, counts.get(b.id, 0))
                    for b in s.scalars(sa.select(Board).order_by(Board.name))]

    def add_board_spec(self, board, *, note: str | None = None, replace: bool = False) -> dict:
        """Add (or with *replace*, overwrite) a board from a :class:`sessions.boards.Board`."""
        fields = board_fields(board)
        if note is not None:
            fields["note"] = note
        if replace and any(b["name"] == board.name for b in self.boards()):
            return self.edit_board(board.name, **fields)
        return self.add_board(board.name, **fields)

    def board_object(self, name: str):
        """The stored board as a :class:`sessions.boards.Board` (for load figures)."""
        from sessions.boards import Board as BoardSpec
        from sessions.boards import Outline

        b = self.board(name)
        outline = None
        if b["outline_stations"]:
            outline = Outline.from_stations(b["outline_stations"], source=b["outline_source"] or "stations")
        return BoardSpec(name=b["name"], length_m=b["length_m"], width_m=b["width_m"],
                         thickness_m=b["thickness_m"], volume_l=b["volume_l"], mass_kg=b["mass_kg"],
                         construction=b["construction"], fins=b["fins"], model=b["model"],
                         version=b["version"], outline=outline)

    def rider_object(self, name: str, at: dt.datetime | None = None):
        """The stored rider as a :class:`sessions.riders.Rider`, with the body mass valid at *at*.

        Raises
        ------
        RiderSpecError
            The rider has no recorded body mass.
        """
        from sessions.riders import Rider as RiderSpec

        r = self.rider(name)
        history = [(pd.Timestamp(m["measured_at"]).to_pydatetime(), m["body_mass_kg"]) for m in r["mass_history"]]
        mass = body_mass_at(history, _aware(at))
        if math.isnan(mass):
            raise RiderSpecError(f"rider {name!r} has no body mass recorded (floatlift rider edit NAME --mass ...)")
        kwargs = {"ability": r["ability"]} if r["ability"] else {}
        return RiderSpec(name=r["name"], body_mass_kg=mass, gear_mass_kg=r["gear_mass_kg"] or 0.0, **kwargs)

    # --- sessions: writing ----------------------------------------------------------------
    def find_sha256(self, sha256: str) -> int | None:
        """Id of the session stored from the file with this SHA-256, or None."""
        with self.engine.connect() as conn:
            return conn.scalar(sa.select(Session.id).where(Session.sha256 == sha256))

    def known_sha256(self) -> dict[str, int]:
        """All stored content hashes -> session id."""
        with self.engine.connect() as conn:
            return dict(conn.execute(sa.select(Session.sha256, Session.id)).all())

    def store_session(
        self,
        analysis: Mapping[str, Any],
        track_bytes: bytes | EncodedTrack,
        *,
        analysis_version: str,
        source_file: str | None = None,
        rider: str | None = None,
        board: str | None = None,
        conditions: Mapping[str, Any] | None = None,
        feedback: Mapping[str, Any] | None = None,
    ) -> tuple[int, bool]:
        """Store an analysed session in one transaction; returns ``(id, created)``.

        *analysis_version* is the version of the analysis code that produced *analysis*
        (``sessions.analysis.ANALYSIS_VERSION``). *track_bytes* are the file's bytes as read (GPX or gzip-compressed GPX); their
        SHA-256 identifies the session. When that file is already stored (also when
        another process stores it at the same moment) nothing is written and
        ``created`` is False. An :class:`EncodedTrack` made elsewhere (the importer's
        worker processes) may be given instead of the bytes.
        """
        _check_analysis(analysis)
        track = track_bytes if isinstance(track_bytes, EncodedTrack) else EncodedTrack.from_bytes(track_bytes)
        sha = track.sha256
        cond = _check_conditions(conditions or {})
        fb = _check_feedback(feedback or {})
        try:
            existing = self.find_sha256(sha)
        except sa.exc.OperationalError as exc:
            raise StoreError(f"cannot read the library at {self.url}: {db._short(exc)}") from exc
        if existing is not None:
            return existing, False
        now = _now()
        try:
            with self._tx() as s, s.begin():
                row = Session(
                    sha256=sha,
                    source_file=(source_file or analysis["source"].get("file") or "")[-400:],
                    track_blob=track.blob, track_codec=track.codec, track_size_b=track.size_b,
                    imported_at=now,
                    rider_id=_get_rider(s, rider).id if rider else None,
                    board_id=_get_board(s, board).id if board else None,
                )
                children = _apply_analysis(row, analysis, analysis_version, now)
                if cond:
                    row.conditions = Conditions(**cond)
                if fb:
                    row.feedback = Feedback(updated_at=now, **fb)
                s.add(row)
                s.flush()
                new_id = row.id
                _insert_children(s, new_id, children)
        except sa.exc.IntegrityError as exc:
            existing = self.find_sha256(sha)
            if existing is None:
                raise StoreError(f"cannot store the session: {db._short(exc)}") from exc
            return existing, False
        except sa.exc.OperationalError as exc:
            raise StoreError(f"cannot write to the library at {self.url}: {db._short(exc)}") from exc
        return new_id, True

    def replace_analysis(self, session_id: int, analysis: Mapping[str, Any], *, analysis_version: str) -> None:
        """Replace a session's analysis, rides and states in one transaction."""
        _check_analysis(analysis)
        try:
            with self._tx() as s, s.begin():
                row = _get_session(s, session_id)
                row.ride_rows.clear()
                row.state_rows.clear()
                s.flush()
                _insert_children(s, row.id, _apply_analysis(row, analysis, analysis_version, _now()))
        except sa.exc.OperationalError as exc:
            raise StoreError(f"cannot write to the library at {self.url}: {db._short(exc)}") from exc

    def set_conditions(self, session_id: int, **fields: Any) -> dict:
        """Set the given conditions fields of a session (None clears one); returns them all."""
        cond = _check_conditions(fields, drop_none=False)
        with self._tx() as s, s.begin():
            row = _get_session(s, session_id)
            if row.conditions is None:
                row.conditions = Conditions()
            for key, value in cond.items():
                setattr(row.conditions, key, value)
            return {k: getattr(row.conditions, k) for k in CONDITION_FIELDS}

    def set_feedback(self, session_id: int, **fields: Any) -> dict:
        """Set the rider's 1-5 scores (``paddling``, ``catching``, ``speed``, ``control``) and ``note``."""
        fb = _check_feedback(fields, drop_none=False)
        with self._tx() as s, s.begin():
            row = _get_session(s, session_id)
            if row.feedback is None:
                row.feedback = Feedback(updated_at=_now())
            for key, value in fb.items():
                setattr(row.feedback, key, value)
            row.feedback.updated_at = _now()
            return _feedback_dict(row.feedback)

    def assign(self, session_id: int, *, rider: str | None = _UNSET, board: str | None = _UNSET) -> None:
        """Link a session to a rider and/or a board (None unlinks)."""
        with self._tx() as s, s.begin():
            row = _get_session(s, session_id)
            if rider is not _UNSET:
                row.rider_id = _get_rider(s, rider).id if rider else None
            if board is not _UNSET:
                row.board_id = _get_board(s, board).id if board else None

    def delete_session(self, session_id: int) -> None:
        with self._tx() as s, s.begin():
            s.delete(_get_session(s, session_id))

    # --- sessions: reading ------------------------------------------------------------------
    def track_bytes(self, session_id: int) -> tuple[str, bytes]:
        """``(source file name, original file bytes)`` of a stored session, checked against its SHA-256."""
        with self.engine.connect() as conn:
            row = conn.execute(sa.select(Session.source_file, Session.track_blob, Session.track_codec,
                                         Session.sha256).where(Session.id == session_id)).first()
        if row is None:
            raise NotFoundError(f"no session {session_id} in the library")
        raw = decode_track(row.track_blob, row.track_codec)
        if hashlib.sha256(raw).hexdigest() != row.sha256:
            raise StoreError(f"the stored track of session {session_id} is damaged (hash mismatch)")
        return row.source_file, raw

    def stale_sessions(self, analysis_version: str | None = None) -> list[int]:
        """Ids of sessions analysed with another version than *analysis_version* (all if None)."""
        stmt = sa.select(Session.id).order_by(Session.id)
        if analysis_version is not None:
            stmt = stmt.where(Session.analysis_version != analysis_version)
        with self.engine.connect() as conn:
            return list(conn.scalars(stmt))

    def session(self, session_id: int) -> dict:
        """Everything stored about one session except the track bytes."""
        with self._tx() as s:
            row = _get_session(s, session_id)
            out = _session_summary(row)
            out.update(
                source_file=row.source_file, points=row.points, sampling_s=row.sampling_s,
                track_size_b=row.track_size_b, end=row.end.isoformat(), imported_at=row.imported_at.isoformat(),
                analysed_at=row.analysed_at.isoformat(),
                time_in_state_s={"shore": row.time_shore_s, "paddle": row.time_paddle_s,
                                 "wait": row.time_wait_s, "ride": row.time_ride_s},
                rides_per_hour=row.rides_per_hour, peak_speed_mps=row.peak_speed_mps,
                paddle_distance_m=row.paddle_distance_m, ride_distance_m=row.ride_distance_m,
                rider_detail=_rider_dict(row.rider, None) if row.rider else None,
                board_detail=_board_dict(row.board, None) if row.board else None,
                conditions=({k: getattr(row.conditions, k) for k in CONDITION_FIELDS}
                            if row.conditions else None),
                feedback=_feedback_dict(row.feedback) if row.feedback else None,
                ride_list=[_ride_dict(r) for r in row.ride_rows],
                states=[{"state": st.state, "start": st.start.isoformat(), "end": st.end.isoformat()}
                        for st in row.state_rows],
            )
            return out

    def analysis(self, session_id: int) -> dict:
        """The stored analysis JSON of a session."""
        with self.engine.connect() as conn:
            value = conn.scalar(sa.select(Session.analysis).where(Session.id == session_id))
        if value is None:
            raise NotFoundError(f"no session {session_id} in the library")
        return value

    def sessions(self, *, boards=None, riders=None, date_from=None, date_to=None) -> list[dict]:
        """Short records of the stored sessions (oldest first), filtered like :meth:`sessions_frame`."""
        with self._tx() as s:
            stmt = (sa.select(Session).order_by(Session.start, Session.id)
                    .options(selectinload(Session.rider), selectinload(Session.board)))
            stmt = self._filter(s, stmt, boards, riders, date_from, date_to)
            return [_session_summary(r) for r in s.scalars(stmt)]

    def counts(self) -> dict[str, int]:
        with self.engine.connect() as conn:
            return {name: conn.scalar(sa.select(sa.func.count()).select_from(table))
                    for name, table in (("riders", Rider), ("boards", Board), ("sessions", Session),
                                        ("rides", Ride))}

    # --- analysis frames ---------------------------------------------------------------------
    def rides_frame(self, *, boards=None, riders=None, date_from=None, date_to=None) -> pd.DataFrame:
        """One row per stored ride with its session's rider, board, load and conditions.

        Columns: :data:`RIDES_COLUMNS`. ``rider_body_mass_kg`` is the rider's body mass
        recorded last before the session started (else the earliest recorded).
        Filters: board names, rider names, ``date_from``/``date_to`` (dates are whole UTC
        days, inclusive; datetimes are exact bounds).
        """
        base = self._base_rows(boards, riders, date_from, date_to)
        ids = [r["session_id"] for r in base]
        rides: list[dict] = []
        if ids:
            with self.engine.connect() as conn:
                for chunk in _chunks(ids, 500):
                    rides.extend(dict(m) for m in conn.execute(
                        sa.select(Ride.session_id, Ride.ride_index, Ride.start, Ride.onset_speed_mps,
                                  Ride.onset_ci_lo_mps, Ride.onset_ci_hi_mps, Ride.duration_s, Ride.distance_m,
                                  Ride.peak_speed_mps, Ride.mean_speed_mps)
                        .where(Ride.session_id.in_(chunk))).mappings())
        by_id = {r["session_id"]: r for r in base}
        rows = []
        for ride in rides:
            sess = by_id[ride["session_id"]]
            row = {k: sess.get(k) for k in RIDES_COLUMNS}
            row.update(ride)
            row["session_start"] = sess["start"]
            rows.append(row)
        frame = _frame(rows, RIDES_COLUMNS)
        return frame.sort_values(["session_start", "session_id", "ride_index"], kind="stable").reset_index(drop=True)

    def sessions_frame(self, *, boards=None, riders=None, date_from=None, date_to=None,
                       with_sampling: bool = False) -> pd.DataFrame:
        """One row per stored session (columns :data:`SESSIONS_COLUMNS`); filters as :meth:`rides_frame`.

        ``with_sampling`` adds ``sampling_s``, the track's median interval between fixes
        (for comparisons; not part of the exported columns).
        """
        rows = self._base_rows(boards, riders, date_from, date_to)
        frame = _frame(rows, SESSIONS_COLUMNS + (("sampling_s",) if with_sampling else ()))
        return frame.sort_values(["start", "session_id"], kind="stable").reset_index(drop=True)

    def _filter(self, s, stmt, boards, riders, date_from, date_to):
        if boards is not None:
            names = _names(boards)
            known = set(s.scalars(sa.select(Board.name).where(Board.name.in_(names))))
            missing = [n for n in names if n not in known]
            if missing:
                raise NotFoundError(f"no board named {', '.join(map(repr, missing))} in the library")
            stmt = stmt.where(Session.board_id.in_(sa.select(Board.id).where(Board.name.in_(names))))
        if riders is not None:
            names = _names(riders)
            known = set(s.scalars(sa.select(Rider.name).where(Rider.name.in_(names))))
            missing = [n for n in names if n not in known]
            if missing:
                raise NotFoundError(f"no rider named {', '.join(map(repr, missing))} in the library")
            stmt = stmt.where(Session.rider_id.in_(sa.select(Rider.id).where(Rider.name.in_(names))))
        lo, hi, hi_inclusive = _date_bounds(date_from, date_to)
        if lo is not None:
            stmt = stmt.where(Session.start >= lo)
        if hi is not None:
            stmt = stmt.where(Session.start <= hi if hi_inclusive else Session.start < hi)
        return stmt

    def _base_rows(self, boards, riders, date_from, date_to) -> list[dict]:
        """Per-session rows with rider, board, load, conditions and feedback joined."""
        cols = [
            Session.id.label("session_id"), Session.sha256, Session.start, Session.duration_s,
            Session.time_paddle_s, Session.time_wait_s, Session.time_ride_s, Session.rides,
            Session.missed_waves, Session.rides_per_hour, Session.sampling_s, Session.rider_id,
            Rider.name.label("rider"), Rider.gear_mass_kg.label("rider_gear_mass_kg"),
            Board.name.label("board"), Board.model.label("board_model"), Board.version.label("board_version"),
            Board.mass_kg.label("board_mass_kg"), Board.volume_l.label("board_volume_l"),
            Board.planform_area_m2, Conditions.wave_face_m, Conditions.period_s,
            Feedback.score_paddling, Feedback.score_catching, Feedback.score_speed, Feedback.score_control,
            Feedback.note.label("feedback_note"),
        ]
        stmt = (sa.select(*cols)
                .outerjoin(Rider, Session.rider_id == Rider.id)
                .outerjoin(Board, Session.board_id == Board.id)
                .outerjoin(Conditions, Conditions.session_id == Session.id)
                .outerjoin(Feedback, Feedback.session_id == Session.id))
        with self._tx() as s:
            stmt = self._filter(s, stmt, boards, riders, date_from, date_to)
            rows = [dict(m) for m in s.execute(stmt).mappings()]
            rider_ids = sorted({r["rider_id"] for r in rows if r["rider_id"] is not None})
            history: dict[int, list[tuple[dt.datetime, float]]] = {}
            for chunk in _chunks(rider_ids, 500):
                for rid, when, mass in s.execute(
                        sa.select(RiderMass.rider_id, RiderMass.measured_at, RiderMass.body_mass_kg)
                        .where(RiderMass.rider_id.in_(chunk))
                        .order_by(RiderMass.rider_id, RiderMass.measured_at, RiderMass.id)):
                    history.setdefault(rid, []).append((when, mass))
        for r in rows:
            r["rider_body_mass_kg"] = body_mass_at(history.get(r["rider_id"], []), r["start"])
        return rows


def board_fields(board) -> dict:
    """Library fields of a :class:`sessions.boards.Board` (SI; outline as stations)."""
    outline = board.outline
    return {
        "model": board.model, "version": board.version, "length_m": board.length_m,
        "width_m": board.width_m, "thickness_m": board.thickness_m, "volume_l": board.volume_l,
        "mass_kg": board.mass_kg, "construction": board.construction, "fins": board.fins,
        "planform_area_m2": board.planform_area_m2,
        "outline_source": None if outline is None else outline.source,
        "outline_stations": None if outline is None else [[float(x), float(w)]
                                                           for x, w in zip(outline.x_m, outline.width_m)],
    }


# --- track encoding ------------------------------------------------------------------------
GZIP_MAGIC = b"\x1f\x8b"


def encode_track(raw: bytes) -> tuple[bytes, str]:
    """Compact form of a track file: gzip files are kept as they are, others are gzip-compressed."""
    if raw[:2] == GZIP_MAGIC:
        return raw, "as-is"
    return gzip.compress(raw, compresslevel=6, mtime=0), "gzip"


@dataclass(frozen=True)
class EncodedTrack:
    """A track file ready to store: its compact form, codec, SHA-256 and size of the original.

    Made with :meth:`from_bytes` (compression is the costly part, so the importer does it
    in its worker processes and sends the smaller blob to the writer).
    """

    blob: bytes
    codec: str
    sha256: str
    size_b: int

    @classmethod
    def from_bytes(cls, raw: bytes) -> EncodedTrack:
        blob, codec = encode_track(raw)
        return cls(blob, codec, hashlib.sha256(raw).hexdigest(), len(raw))


def decode_track(blob: bytes, codec: str) -> bytes:
    """Inverse of :func:`encode_track`: the original file bytes."""
    if codec == "as-is":
        return bytes(blob)
    if codec == "gzip":
        return gzip.decompress(blob)
    raise StoreError(f"unknown track encoding {codec!r} (written by a newer floatlift?)")


# --- pure helpers --------------------------------------------------------------------------
def body_mass_at(history: list[tuple[dt.datetime, float]], when: dt.datetime | None) -> float:
    """Body mass [kg] valid at *when*: the last weighing at or before it, else the first one.

    *history* is sorted by time. Returns NaN for an empty history.
    """
    if not history:
        return math.nan
    if when is None:
        return float(history[-1][1])
    i = bisect.bisect_right([t for t, _ in history], when)
    return float(history[max(i - 1, 0)][1])


def _parse_time(value: Any, what: str) -> dt.datetime:
    if isinstance(value, str):  # the analysis document's own form, e.g. 2026-04-18T07:00:00.200Z
        try:
            when = dt.datetime.fromisoformat(value)
        except ValueError:
            pass
        else:
            return when.replace(tzinfo=dt.timezone.utc) if when.tzinfo is None else when.astimezone(dt.timezone.utc)
    try:
        ts = pd.Timestamp(value)
    except (TypeError, ValueError) as exc:
        raise AnalysisError(f"analysis field {what} is not a time: {value!r}") from exc
    if pd.isna(ts):
        raise AnalysisError(f"analysis field {what} is missing")
    if ts.tzinfo is None:
        ts = ts.tz_localize("UTC")
    return ts.tz_convert("UTC").to_pydatetime()


def _num(value: Any) -> float | None:
    """Float or None (None and NaN are missing)."""
    if value is None:
        return None
    value = float(value)
    return None if math.isnan(value) else value


def _check_analysis(analysis: Mapping[str, Any]) -> None:
    if not isinstance(analysis, Mapping) or analysis.get("schema") != ANALYSIS_SCHEMA:
        got = analysis.get("schema") if isinstance(analysis, Mapping) else type(analysis).__name__
        raise AnalysisError(f"analysis result of schema {got!r}; this library stores {ANALYSIS_SCHEMA!r}")
    for key in ("source", "session", "rides", "states"):
        if key not in analysis:
            raise AnalysisError(f"analysis result lacks {key!r}")


def _apply_analysis(row: Session, analysis: Mapping[str, Any], version: str, now: dt.datetime
                    ) -> tuple[list[dict], list[dict]]:
    """Copy an analysis result (contract ``floatlift.analysis/1``) onto a session row.

    Returns the session's ride and state rows as plain dicts (without ``session_id``), for
    :func:`_insert_children`: one multi-row insert each instead of an ORM object per row.
    """
    src, ses = analysis["source"], analysis["session"]
    tis = ses.get("time_in_state_s", {})
    row.points = int(src.get("points") or 0)
    row.sampling_s = _num(src.get("sampling_s"))
    row.start = _parse_time(ses["start"], "session.start")
    row.end = _parse_time(ses["end"], "session.end")
    row.duration_s = float(ses["duration_s"])
    row.time_shore_s = float(tis.get("shore", 0.0))
    row.time_paddle_s = float(tis.get("paddle", 0.0))
    row.time_wait_s = float(tis.get("wait", 0.0))
    row.time_ride_s = float(tis.get("ride", 0.0))
    row.rides = int(ses.get("rides", len(analysis["rides"])))
    row.missed_waves = int(ses.get("missed_waves", 0))
    row.rides_per_hour = _num(ses.get("rides_per_hour"))
    row.peak_speed_mps = _num(ses.get("peak_speed_mps"))
    row.paddle_distance_m = _num(ses.get("paddle_distance_m"))
    row.ride_distance_m = _num(ses.get("ride_distance_m"))
    row.analysis = _json_safe(dict(analysis))
    row.analysis_version = str(version)
    row.analysed_at = now
    rides = []
    for r in analysis["rides"]:
        ci = r.get("onset_ci_mps") or (None, None)
        rides.append(dict(
            ride_index=int(r["index"]),
            catch_start=_parse_time(r["catch_start"], "ride.catch_start") if r.get("catch_start") else None,
            start=_parse_time(r["start"], "ride.start"), end=_parse_time(r["end"], "ride.end"),
            duration_s=float(r["duration_s"]), distance_m=float(r["distance_m"]),
            peak_speed_mps=float(r["peak_speed_mps"]), mean_speed_mps=float(r["mean_speed_mps"]),
            onset_speed_mps=_num(r.get("onset_speed_mps")),
            onset_ci_lo_mps=_num(ci[0]), onset_ci_hi_mps=_num(ci[1]),
        ))
    states = [dict(seq=i, state=str(st["state"]), start=_parse_time(st["start"], "state.start"),
                   end=_parse_time(st["end"], "state.end"))
              for i, st in enumerate(analysis["states"])]
    return rides, states


def _insert_children(s: OrmSession, session_id: int, children: tuple[list[dict], list[dict]]) -> None:
    """Insert a session's rides and states (from :func:`_apply_analysis`) in bulk."""
    for table, rows in ((Ride.__table__, children[0]), (StateSpan.__table__, children[1])):
        if rows:
            s.execute(table.insert(), [dict(r, session_id=session_id) for r in rows])


def _json_safe(value: Any) -> Any:
    """Replace NaN/inf (not valid JSON; PostgreSQL refuses them) by None, recursively."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, Mapping):
        return {str(k): _json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_safe(v) for v in value]
    return value


def _aware(when: dt.datetime | dt.date | None) -> dt.datetime | None:
    if when is None:
        return None
    if not isinstance(when, dt.datetime):
        when = dt.datetime(when.year, when.month, when.day)
    return when if when.tzinfo else when.replace(tzinfo=dt.timezone.utc)


def _clean_name(name: str, what: str) -> str:
    text = (name or "").strip()
    if not text:
        raise LibraryInputError(f"a {what} needs a name")
    if len(text) > 120:
        raise LibraryInputError(f"{what} name longer than 120 characters")
    return text


def _finite_range(value: Any, lo: float, hi: float, what: str, error=LibraryInputError) -> float:
    try:
        x = float(value)
    except (TypeError, ValueError) as exc:
        raise error(f"{what}: not a number: {value!r}") from exc
    if not math.isfinite(x) or not lo <= x <= hi:
        raise error(f"{what} = {value!r} is outside {lo:g}..{hi:g}")
    return x


def _check_rider_fields(stance, ability, gear_mass_kg, body_mass_kg) -> None:
    if stance is not None and stance not in STANCES:
        raise RiderSpecError(f"stance {stance!r}: use one of {', '.join(STANCES)}")
    if ability is not None and ability not in ABILITY_LEVELS:
        raise RiderSpecError(f"ability {ability!r}: use one of {', '.join(ABILITY_LEVELS)}")
    if gear_mass_kg is not None:
        _finite_range(gear_mass_kg, *_riders.GEAR_MASS_RANGE_KG, "gear mass [kg]", RiderSpecError)
    if body_mass_kg is not None:
        _finite_range(body_mass_kg, *_riders.BODY_MASS_RANGE_KG, "body mass [kg]", RiderSpecError)


_BOARD_RANGES = {  # the ranges of sessions.boards; planform area: common practice, no published source
    "length_m": _boards.LENGTH_RANGE_M, "width_m": _boards.WIDTH_RANGE_M,
    "thickness_m": _boards.THICKNESS_RANGE_M, "volume_l": _boards.VOLUME_RANGE_L,
    "planform_area_m2": (0.1, 5.0), "mass_kg": _boards.BOARD_MASS_RANGE_KG,
}


def _check_board_fields(fields: Mapping[str, Any], allowed: Iterable[str]) -> None:
    unknown = set(fields) - set(allowed)
    if unknown:
        raise BoardSpecError(f"unknown board field(s): {', '.join(sorted(unknown))}")
    for key, (lo, hi) in _BOARD_RANGES.items():
        if fields.get(key) is not None:
            _finite_range(fields[key], lo, hi, key, BoardSpecError)


def _check_conditions(fields: Mapping[str, Any], drop_none: bool = True) -> dict:
    out: dict[str, Any] = {}
    for key, value in fields.items():
        if key not in CONDITION_FIELDS:
            raise LibraryInputError(f"unknown conditions field {key!r} (known: {', '.join(CONDITION_FIELDS)})")
        if value is None:
            if not drop_none:
                out[key] = None
            continue
        if key == "note":
            out[key] = str(value)
        elif key == "water_preset":
            if value not in WATER_PRESETS:
                raise LibraryInputError(f"water preset {value!r}: use one of {', '.join(WATER_PRESETS)}")
            out[key] = value
        elif key == "tide_phase":
            if value not in TIDE_PHASES:
                raise LibraryInputError(f"tide phase {value!r}: use one of {', '.join(TIDE_PHASES)}")
            out[key] = value
        else:
            lo, hi = CONDITION_RANGES[key]
            out[key] = _finite_range(value, lo, hi, key)
    return out


def _check_feedback(fields: Mapping[str, Any], drop_none: bool = True) -> dict:
    out: dict[str, Any] = {}
    for key, value in fields.items():
        name = key.removeprefix("score_")
        if key == "note":
            if value is not None or not drop_none:
                out["note"] = value
            continue
        if name not in SCORE_NAMES:
            raise LibraryInputError(f"unknown feedback field {key!r} (known: {', '.join(SCORE_NAMES)}, note)")
        if value is None:
            if not drop_none:
                out[f"score_{name}"] = None
            continue
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            raise LibraryInputError(f"score {name}: whole number 1-5 expected, got {value!r}")
        try:
            score = int(str(value).strip())
        except ValueError as exc:
            raise LibraryInputError(f"score {name}: whole number 1-5 expected, got {value!r}") from exc
        if not 1 <= score <= 5 or float(value) != score:
            raise LibraryInputError(f"score {name}: whole number 1-5 expected, got {value!r}")
        out[f"score_{name}"] = score
    return out


def _date_bounds(date_from, date_to):
    """Filter bounds: (lower, upper, upper_inclusive); dates count as whole UTC days."""
    def conv(value, end: bool):
        if value is None:
            return None, True
        if isinstance(value, str):
            try:
                ts = pd.Timestamp(value)
            except ValueError as exc:
                raise LibraryInputError(f"not a date: {value!r} (use YYYY-MM-DD)") from exc
            is_day = len(value.strip()) <= 10
            value = ts.date() if is_day else ts.to_pydatetime()
        if isinstance(value, pd.Timestamp):
            value = value.to_pydatetime()
        if isinstance(value, dt.datetime):
            return _aware(value), True
        if isinstance(value, dt.date):
            day = _aware(value)
            return (day + dt.timedelta(days=1), False) if end else (day, True)
        raise LibraryInputError(f"not a date: {value!r}")
    lo, _ = conv(date_from, False)
    hi, inclusive = conv(date_to, True)
    return lo, hi, inclusive


def _names(value) -> list[str]:
    if isinstance(value, str):
        return [value]
    return [str(v) for v in value]


def _chunks(items: list, n: int):
    for i in range(0, len(items), n):
        yield items[i:i + n]


def _frame(rows: list[dict], columns: tuple[str, ...]) -> pd.DataFrame:
    """DataFrame with the given columns and stable dtypes (also when empty)."""
    data = {}
    for col in columns:
        values = [r.get(col) for r in rows]
        if col in _TIME_COLUMNS:
            data[col] = pd.to_datetime(pd.Series(values, dtype="object"), utc=True).dt.as_unit("ns")
        elif col in _INT_COLUMNS:
            data[col] = pd.Series(values, dtype="int64")
        elif col in _TEXT_COLUMNS:
            data[col] = pd.Series(values, dtype="object")
        else:
            data[col] = pd.Series([math.nan if v is None else v for v in values], dtype="float64")
    return pd.DataFrame(data, columns=list(columns))


def _rename(s: OrmSession, row: Rider | Board, new_name: str | None, what: str) -> None:
    """Give a rider or board a new unique name (nothing when *new_name* is None)."""
    if new_name is None:
        return
    new_name = _clean_name(new_name, what)
    table = type(row)
    other = s.scalar(sa.select(table.id).where(table.name == new_name))
    if other is not None and other != row.id:
        raise LibraryInputError(f"{what} {new_name!r} already exists")
    row.name = new_name


def _get_rider(s: OrmSession, name: str) -> Rider:
    rider = s.scalar(sa.select(Rider).where(Rider.name == name))
    if rider is None:
        known = list(s.scalars(sa.select(Rider.name).order_by(Rider.name).limit(20)))
        hint = f" (known: {', '.join(known)})" if known else " (add one with 'floatlift rider add')"
        raise NotFoundError(f"no rider named {name!r} in the library{hint}")
    return rider


def _get_board(s: OrmSession, name: str) -> Board:
    board = s.scalar(sa.select(Board).where(Board.name == name))
    if board is None:
        known = list(s.scalars(sa.select(Board.name).order_by(Board.name).limit(20)))
        hint = f" (known: {', '.join(known)})" if known else " (add one with 'floatlift board add')"
        raise NotFoundError(f"no board named {name!r} in the library{hint}")
    return board


def _get_session(s: OrmSession, session_id: int) -> Session:
    row = s.get(Session, int(session_id))
    if row is None:
        raise NotFoundError(f"no session {session_id} in the library (see 'floatlift list')")
    return row


def _rider_dict(r: Rider, n_sessions: int | None) -> dict:
    masses = [{"measured_at": m.measured_at.isoformat(), "body_mass_kg": m.body_mass_kg} for m in r.masses]
    out = {"id": r.id, "name": r.name, "stance": r.stance, "ability": r.ability,
           "body_mass_kg": masses[-1]["body_mass_kg"] if masses else None,
           "gear_mass_kg": r.gear_mass_kg, "note": r.note, "mass_history": masses}
    if n_sessions is not None:
        out["sessions"] = int(n_sessions)
    return out


def _board_dict(b: Board, n_sessions: int | None) -> dict:
    out = {"id": b.id, "name": b.name}
    out.update({k: getattr(b, k) for k in Library.BOARD_FIELDS})
    if n_sessions is not None:
        out["sessions"] = int(n_sessions)
    return out


def _feedback_dict(f: Feedback) -> dict:
    out = {n: getattr(f, f"score_{n}") for n in SCORE_NAMES}
    out["note"] = f.note
    return out


def _ride_dict(r: Ride) -> dict:
    return {"index": r.ride_index, "catch_start": r.catch_start.isoformat() if r.catch_start else None,
            "start": r.start.isoformat(), "end": r.end.isoformat(), "duration_s": r.duration_s,
            "distance_m": r.distance_m, "peak_speed_mps": r.peak_speed_mps, "mean_speed_mps": r.mean_speed_mps,
            "onset_speed_mps": r.onset_speed_mps,
            "onset_ci_mps": (None if r.onset_ci_lo_mps is None else [r.onset_ci_lo_mps, r.onset_ci_hi_mps])}


def _session_summary(row: Session) -> dict:
    return {"id": row.id, "sha256": row.sha256, "start": row.start.isoformat(),
            "duration_s": row.duration_s, "rider": row.rider.name if row.rider else None,
            "board": row.board.name if row.board else None, "rides": row.rides,
            "missed_waves": row.missed_waves, "source_file": row.source_file,
            "analysis_version": row.analysis_version}
