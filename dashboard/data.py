"""Cached loading for the dashboard: the library connection and every figure the pages show.

Everything here calls :mod:`sessions` and caches the result; nothing is computed here.

* The :class:`~sessions.store.Library` is opened once per database URL
  (``st.cache_resource``); the URL comes from ``$FLOATLIFT_DB`` (set by
  ``floatlift dashboard --db``), else the embedded library file.
* Query results are cached with ``st.cache_data`` keyed on the URL and a *generation*
  number. Every write made through the dashboard (an import, feedback) bumps the
  generation, so the next read sees it; writes made elsewhere (the command line) show
  after :data:`FRAME_TTL_S` seconds at the latest.
* The drawing of a session (the analysis grid: positions, speed, state, ride) is not
  stored in the library, so it is recomputed by :func:`sessions.analysis.analyse` from the
  stored track and cached per session and file hash.
"""

from __future__ import annotations

import hashlib
import math
import warnings
from dataclasses import dataclass, field
from pathlib import PurePosixPath

import pandas as pd
import streamlit as st

from sessions.errors import FloatliftError, TrackReadError
from sessions.store import Library, resolve_url

#: Largest GPX file accepted by the import page [bytes] (the server's own limit is set
#: to the same size by ``floatlift dashboard``).
MAX_UPLOAD_BYTES = 50 * 1024 * 1024
UPLOAD_SUFFIXES = (".gpx", ".gpx.gz")
#: How long a cached query stays valid without a write through the dashboard [s].
FRAME_TTL_S = 60
#: Samples kept for drawing: the analysis grid columns the pages use.
SAMPLE_COLUMNS = ("time", "t_s", "x_m", "y_m", "speed_mps", "state", "ride")


def db_url() -> str:
    """The library URL of this dashboard: ``$FLOATLIFT_DB`` or the embedded library file."""
    return resolve_url(None)


@st.cache_resource(show_spinner=False)
def library(url: str) -> Library:
    """The open library at *url* (one per process; the engine pools its connections)."""
    return Library.open(url)


@st.cache_resource(show_spinner=False)
def _generations() -> dict:
    return {}


def generation(url: str) -> int:
    """The write generation of *url*: part of every cache key below."""
    return _generations().get(url, 0)


def bump(url: str) -> None:
    """Mark the library at *url* as changed (after a write through the dashboard)."""
    gens = _generations()
    gens[url] = gens.get(url, 0) + 1


# --- frames and records -------------------------------------------------------------------
@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def sessions_frame(url: str, gen: int, with_sampling: bool = False) -> pd.DataFrame:
    return library(url).sessions_frame(with_sampling=with_sampling)


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def rides_frame(url: str, gen: int) -> pd.DataFrame:
    return library(url).rides_frame()


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def riders(url: str, gen: int) -> list[dict]:
    return library(url).riders()


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def boards(url: str, gen: int) -> list[dict]:
    return library(url).boards()


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def session_detail(url: str, session_id: int, gen: int) -> dict:
    return library(url).session(int(session_id))


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def analysis_doc(url: str, session_id: int, gen: int) -> dict:
    """The stored analysis document (``floatlift.analysis/1``) of a session."""
    return library(url).analysis(int(session_id))


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def counts(url: str, gen: int) -> dict:
    return library(url).counts()


# --- the drawing of one session ---------------------------------------------------------------
@dataclass
class SessionDrawing:
    """The analysis grid of a stored session and the analysis it came from."""

    samples: pd.DataFrame  # SAMPLE_COLUMNS
    rides: list[dict]  # the "rides" of the analysis document
    analysis_version: str
    matches_stored: bool  # the re-run found the same rides as the stored analysis


@st.cache_data(max_entries=48, show_spinner="Drawing the session…")
def session_drawing(url: str, session_id: int, sha256: str) -> SessionDrawing:
    """Re-run the analysis of a stored track for its drawing (cached by file hash)."""
    from sessions.analysis import ANALYSIS_VERSION, analyse
    from sessions.gpx import read_gpx

    lib = library(url)
    name, raw = lib.track_bytes(int(session_id))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # data-quality warnings were shown at import
        result = analyse(read_gpx(raw))
    doc = result.to_json()
    stored = lib.session(int(session_id))["ride_list"]
    matches = [_iso(r["start"]) for r in stored] == [_iso(r["start"]) for r in doc["rides"]]
    return SessionDrawing(result.samples.loc[:, list(SAMPLE_COLUMNS)].copy(), doc["rides"],
                          ANALYSIS_VERSION, matches)


@st.cache_data(max_entries=96, show_spinner=False)
def track_picture(url: str, session_id: int, sha256: str) -> bytes:
    """PNG of a session's path by activity state (cached)."""
    from dashboard import figures

    drawing = session_drawing(url, session_id, sha256)
    return figures.png(figures.track_figure(drawing.samples, drawing.rides))


@st.cache_data(max_entries=96, show_spinner=False)
def speed_picture(url: str, session_id: int, sha256: str, units, zoom_ride: int | None, gen: int) -> bytes:
    """PNG of a session's speed trace with the stored rides and onsets (cached per unit and zoom)."""
    from dashboard import figures

    drawing = session_drawing(url, session_id, sha256)
    stored = analysis_doc(url, session_id, gen)["rides"]
    return figures.png(figures.speed_figure(drawing.samples, stored, units, zoom_ride=zoom_ride))


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def planform_picture(url: str, name: str, gen: int, units) -> bytes | None:
    from dashboard import figures

    spec = board_object(url, name, gen)
    if spec.outline is None:
        return None
    return figures.png(figures.planform_figure(spec.outline, units, name))


def _iso(text: str) -> str:
    """A time as ISO text in UTC to the millisecond (naive times are UTC)."""
    ts = pd.Timestamp(text)
    ts = ts.tz_localize("UTC") if ts.tzinfo is None else ts.tz_convert("UTC")
    return ts.round("ms").isoformat()


# --- load figures --------------------------------------------------------------------------------
@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def board_object(url: str, name: str, gen: int):
    """The stored board as a :class:`sessions.boards.Board` (outline included)."""
    return library(url).board_object(name)


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def load_figures(url: str, board: str, rider: str, water: str, gen: int):
    """:func:`sessions.load.load_figures` for a stored board and rider (latest body mass).

    Returns ``(LoadFigures, warnings)``; model-validity warnings are returned as text
    so the page can show them.
    """
    from sessions.load import load_figures as compute

    lib = library(url)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        figures = compute(lib.board_object(board), lib.rider_object(rider), water)
    return figures, sorted({str(w.message) for w in caught})


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def measured_on_board(url: str, gen: int, board: str) -> pd.DataFrame:
    """Measured median onset per rider on *board* beside the planing model's band.

    :func:`sessions.compare.model_table` on the board's rides (columns board, rider,
    rides, planform_loading_npm2, litres_per_kg, measured_median_mps, model_lo_mps,
    model_hi_mps).
    """
    from sessions import compare as cmp

    rides = rides_frame(url, gen)
    rides = cmp.add_load_terms(rides[rides["board"] == board])
    return cmp.model_table(rides, cmp.board_load_model({board: board_object(url, board, gen)}))


# --- comparison --------------------------------------------------------------------------------
@st.cache_data(ttl=FRAME_TTL_S, max_entries=16, show_spinner="Comparing boards…")
def comparison(url: str, gen: int, boards_: tuple[str, ...], riders_: tuple[str, ...],
               wave_band_m: tuple[float, float] | None, n_resamples: int):
    """:func:`sessions.compare.compare_boards` on the library (first board = A)."""
    from sessions import compare as cmp

    lib = library(url)
    rides = rides_frame(url, gen)
    sessions = sessions_frame(url, gen, with_sampling=True)
    specs = {name: lib.board_object(name) for name in boards_}
    selection = cmp.Selection(boards=tuple(boards_), riders=tuple(riders_), wave_band_m=wave_band_m)
    rules = cmp.Rules(n_resamples=n_resamples)
    return cmp.compare_boards(rides, sessions, selection, rules, onset_model=cmp.board_load_model(specs))


@st.cache_data(ttl=FRAME_TTL_S, max_entries=16, show_spinner=False)
def comparison_pictures(url: str, gen: int, boards_: tuple[str, ...], riders_: tuple[str, ...],
                        wave_band_m: tuple[float, float] | None, n_resamples: int, units) -> tuple[bytes, bytes]:
    """PNG pictures of a comparison: onset distributions, and rides per hour with catch success."""
    from dashboard import figures
    from sessions.report import rides_per_hour_figure

    result = comparison(url, gen, boards_, riders_, wave_band_m, n_resamples)
    return (figures.png(figures.onset_distribution_figure(result, units)),
            figures.png(rides_per_hour_figure(result)))


@st.cache_data(ttl=FRAME_TTL_S, show_spinner=False)
def campaign(url: str, gen: int, model: str) -> pd.DataFrame:
    from sessions.compare import campaign_table

    return campaign_table(rides_frame(url, gen), sessions_frame(url, gen), model)


# --- writes ----------------------------------------------------------------------------------------
@dataclass
class UploadResult:
    """What the import page did with each uploaded file."""

    imported: list[dict] = field(default_factory=list)  # file, session_id, rides
    already_present: list[dict] = field(default_factory=list)  # file, session_id
    refused: list[dict] = field(default_factory=list)  # file, reason


def check_upload(name: str, size_b: int) -> str | None:
    """Why an uploaded file is refused before reading it (None: accepted)."""
    if not name.lower().endswith(UPLOAD_SUFFIXES):
        return "not a .gpx or .gpx.gz file"
    if size_b > MAX_UPLOAD_BYTES:
        return f"file of {size_b / 1e6:.1f} MB is larger than the limit of {MAX_UPLOAD_BYTES / 1e6:.0f} MB"
    if size_b == 0:
        return "the file is empty"
    return None


def import_uploads(url: str, files: list[tuple[str, bytes]], *, rider: str | None, board: str | None,
                   conditions: dict) -> UploadResult:
    """Analyse uploaded GPX files and store them with a rider, board and conditions.

    Each file is handled on its own: a bad file is refused with its reason and the others
    are still imported. A file already in the library (same bytes) is not stored twice.
    """
    from sessions.store.importer import analyse_track_bytes

    lib = library(url)
    out = UploadResult()
    known = lib.known_sha256()
    for raw_name, data in files:
        name = PurePosixPath(str(raw_name).replace("\\", "/")).name or "upload.gpx"
        reason = check_upload(name, len(data))
        if reason is not None:
            out.refused.append({"file": name, "reason": reason})
            continue
        sha = hashlib.sha256(data).hexdigest()
        if sha in known:
            out.already_present.append({"file": name, "session_id": known[sha]})
            continue
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                analysis, version = analyse_track_bytes(data, name)
            sid, created = lib.store_session(analysis, data, analysis_version=version, source_file=name,
                                             rider=rider, board=board, conditions=conditions)
        except TrackReadError as exc:
            out.refused.append({"file": name, "reason": f"not a readable GPX track: {exc}"})
            continue
        except FloatliftError as exc:
            out.refused.append({"file": name, "reason": str(exc)})
            continue
        except MemoryError:
            out.refused.append({"file": name, "reason": "not enough memory to analyse this track"})
            continue
        known[sha] = sid
        if created:
            out.imported.append({"file": name, "session_id": sid, "rides": len(analysis["rides"])})
        else:
            out.already_present.append({"file": name, "session_id": sid})
    if out.imported:
        bump(url)
    return out


def save_feedback(url: str, session_id: int, scores: dict[str, int | None], note: str | None) -> dict:
    """Store a session's 1-5 scores and note (:meth:`Library.set_feedback`)."""
    note = (note or "").strip() or None
    saved = library(url).set_feedback(int(session_id), **scores, note=note)
    bump(url)
    return saved


def env_summary() -> str:
    """The library the dashboard shows, password masked (for the sidebar)."""
    from sessions.store import mask_url

    return mask_url(db_url())


def finite(value) -> bool:
    try:
        return value is not None and math.isfinite(float(value))
    except (TypeError, ValueError):
        return False

