"""Session analysis pipeline: track -> conditioned path -> states -> rides -> metrics.

Public API (other parts of floatlift code against these names)::

    ANALYSIS_VERSION                      # bumped whenever results change
    AnalysisSettings                      # all tunables; to_dict() / from_dict()
    analyse(track, *, settings=None) -> SessionAnalysis
    analyse_file(path_or_bytes, **kw) -> SessionAnalysis
    SessionAnalysis.to_json()             # the "floatlift.analysis/1" document
    SessionAnalysis.rides                 # list of sessions.rides.Ride
    SessionAnalysis.samples               # DataFrame on the analysis grid
    SessionAnalysis.metrics               # sessions.metrics.SessionMetrics

Steps: :func:`sessions.conditioning.condition` (local frame, spikes, Kalman/RTS
smoother per gap-free piece), :func:`sessions.conditioning.resample_uniform` (regular
grid, 1 s by default), :func:`sessions.states.estimate_shore` and
:func:`sessions.states.label_states` (HMM + Viterbi), :mod:`sessions.rides` (ride
extraction, planing onset, missed waves), :mod:`sessions.metrics`.

The results are estimates from a consumer GPS track: surf within your ability and follow
local rules and lifeguards.
"""

from __future__ import annotations

import dataclasses
import functools
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from sessions.conditioning import ConditionedTrack, ConditioningSettings, condition, resample_uniform
from sessions.errors import AnalysisError
from sessions.metrics import SessionMetrics, session_metrics
from sessions.rides import Ride, RideSettings, clean_ride_labels, extract_rides, find_missed_waves, reject_scattered_rides, require_water_context
from sessions.states import PADDLE, RIDE, STATES, ShoreGeometry, StateModelSettings, estimate_shore, label_states, net_speed, runs
from sessions.track import Track

#: Version of the analysis method; stored beside results so the library re-analyses
#: sessions when it changes.
ANALYSIS_VERSION = "1.4.0"
SCHEMA = "floatlift.analysis/1"
CAUTION = "Estimates from a GPS track only; surf within your ability and follow local rules and lifeguards."


@dataclass
class AnalysisSettings:
    """Every tunable of the analysis, grouped by step; serialisable with :meth:`to_dict`."""

    grid_step_s: float = 1.0
    conditioning: ConditioningSettings = field(default_factory=ConditioningSettings)
    states: StateModelSettings = field(default_factory=StateModelSettings)
    rides: RideSettings = field(default_factory=RideSettings)
    onset_seed: int = 0

    def to_dict(self) -> dict:
        return {
            "grid_step_s": self.grid_step_s,
            "conditioning": dataclasses.asdict(self.conditioning),
            "states": dataclasses.asdict(self.states),
            "rides": dataclasses.asdict(self.rides),
            "onset_seed": self.onset_seed,
        }

    @classmethod
    def from_dict(cls, data: dict) -> AnalysisSettings:
        """Inverse of :meth:`to_dict`; unknown keys raise :class:`AnalysisError`."""
        data = dict(data or {})
        known = {"grid_step_s", "conditioning", "states", "rides", "onset_seed"}
        unknown = sorted(set(data) - known)
        if unknown:
            raise AnalysisError(f"unknown analysis setting(s): {', '.join(unknown)}")
        try:
            return cls(
                grid_step_s=float(data.get("grid_step_s", 1.0)),
                conditioning=ConditioningSettings(**data.get("conditioning", {})),
                states=StateModelSettings(**data.get("states", {})),
                rides=RideSettings(**data.get("rides", {})),
                onset_seed=int(data.get("onset_seed", 0)),
            )
        except (TypeError, ValueError) as exc:
            raise AnalysisError(f"bad analysis setting: {exc}") from exc


@dataclass
class SessionAnalysis:
    """Result of :func:`analyse`.

    Attributes
    ----------
    track : Track
    settings : AnalysisSettings
    conditioned : ConditionedTrack
        Per-fix smoothed path (see :mod:`sessions.conditioning`).
    samples : DataFrame
        The analysis grid: ``time`` (UTC), ``t_s`` (seconds since the first fix),
        ``x_m``, ``y_m`` (east/north of the session's local frame), ``speed_mps``,
        ``speed_sd_mps``, ``cross_shore_m`` (seaward of the estimated water's edge; NaN
        when the shore direction is unknown), ``land_margin_m`` (distance beyond the
        estimated land around the start and end points; negative on land), ``state`` (one of ``STATES``), ``ride``
        (index into :attr:`rides`, -1 outside rides), ``piece`` (gap-free piece).
    rides : list of Ride
    missed_waves : list of (start_s, end_s)
    metrics : SessionMetrics
    shore : ShoreGeometry
    """

    track: Track
    settings: AnalysisSettings
    conditioned: ConditionedTrack
    samples: pd.DataFrame
    rides: list[Ride]
    missed_waves: list[tuple[float, float]]
    metrics: SessionMetrics
    shore: ShoreGeometry
    version: str = ANALYSIS_VERSION

    @property
    def start(self) -> pd.Timestamp:
        return self.track.start

    @functools.cached_property
    def _start(self) -> pd.Timestamp:
        # looked up once: to_json converts thousands of offsets
        return self.track.start

    def time_at(self, t_s: float) -> pd.Timestamp:
        """UTC time of a ``t_s`` offset."""
        return self._start + pd.Timedelta(seconds=float(t_s))

    def iso_at(self, t_s: float) -> str:
        return iso_utc(self.time_at(t_s))

    def state_runs(self) -> list[dict]:
        """Runs of equal state on the grid: ``{"state", "start", "end"}`` (ISO UTC).

        A run ends where the next one starts; the last run before a long gap (or the
        end) ends at the last fix before it.
        """
        t = self.samples["t_s"].to_numpy()
        piece = self.samples["piece"].to_numpy()
        codes = self.samples["state"].map({s: k for k, s in enumerate(STATES)}).to_numpy()
        key = codes.astype(np.int64) * 1_000_000 + piece.astype(np.int64)
        step = self.settings.grid_step_s
        bounds = piece_bounds_s(self.conditioned)
        spans = []
        for _val, a, b in runs(key):
            end_s = t[b] if b < len(t) and piece[b] == piece[a] else bounds.get(int(piece[a]), (0.0, t[b - 1] + step))[1]
            spans.append((STATES[codes[a]], t[a], max(end_s, t[a])))
        starts = iso_utc_offsets(self._start, [a for _, a, _ in spans])
        ends = iso_utc_offsets(self._start, [b for _, _, b in spans])
        return [{"state": st, "start": a, "end": b} for (st, _, _), a, b in zip(spans, starts, ends)]

    def to_json(self) -> dict:
        """The ``floatlift.analysis/1`` document (strict JSON: no NaN, times ISO UTC ``Z``)."""
        m = self.metrics
        meta = self.track.meta
        doc = {
            "schema": SCHEMA,
            "analysis_version": self.version,
            "caution": CAUTION,
            "source": {
                "file": meta.source,
                "sha256": meta.sha256,
                "points": int(self.track.n_points),
                "sampling_s": _num(self.track.sampling_s),
            },
            "session": {
                "start": iso_utc(self.track.start),
                "end": iso_utc(self.track.end),
                "duration_s": _num(m.duration_s),
                "water_s": _num(m.water_s),
                "gap_s": _num(m.gap_s),
                "time_in_state_s": {k: _num(v) for k, v in m.time_in_state_s.items()},
                "share_in_state": {k: _num(v) for k, v in m.share_in_state.items()},
                "rides": int(m.rides),
                "missed_waves": int(m.missed_waves),
                "rides_per_hour": _num(m.rides_per_hour),
                "peak_speed_mps": _num(m.peak_speed_mps),
                "paddle_distance_m": _num(m.paddle_distance_m),
                "ride_distance_m": _num(m.ride_distance_m),
                "longest_ride_s": _num(m.longest_ride_s),
                "longest_ride_m": _num(m.longest_ride_m),
                "median_onset_speed_mps": _num(m.median_onset_speed_mps),
                "shore_direction": self.shore.method,
            },
            "rides": [self._ride_json(r) for r in self.rides],
            "missed_waves": [{"start": self.iso_at(a), "end": self.iso_at(b)} for a, b in self.missed_waves],
            "states": self.state_runs(),
            "settings": self.settings.to_dict(),
        }
        return doc

    def _ride_json(self, r: Ride) -> dict:
        return {
            "index": int(r.index),
            "catch_start": self.iso_at(r.catch_start_s),
            "start": self.iso_at(r.start_s),
            "end": self.iso_at(r.end_s),
            "duration_s": _num(r.duration_s),
            "distance_m": _num(r.distance_m),
            "peak_speed_mps": _num(r.peak_speed_mps),
            "mean_speed_mps": _num(r.mean_speed_mps),
            "onset_speed_mps": _num(r.onset_speed_mps),
            "onset_ci_mps": None if r.onset_ci_mps is None else [_num(r.onset_ci_mps[0]), _num(r.onset_ci_mps[1])],
            "onset_reason": r.onset_reason,
            "onset_time_ci": None if r.onset_time_ci_s is None
            else [self.iso_at(r.onset_time_ci_s[0]), self.iso_at(r.onset_time_ci_s[1])],
        }


# --- pipeline ----------------------------------------------------------------------------
def analyse(track: Track, *, settings: AnalysisSettings | None = None) -> SessionAnalysis:
    """Analyse one track (see the module docstring for the steps).

    Raises
    ------
    AnalysisError
        When the track cannot be analysed (fewer than two fixes, no gap-free stretch).
    """
    s = settings or AnalysisSettings()
    if not isinstance(track, Track):
        raise AnalysisError(f"analyse() needs a Track, not {type(track).__name__}")
    if not (math.isfinite(s.grid_step_s) and s.grid_step_s > 0):
        raise AnalysisError(f"grid_step_s must be a positive number of seconds, not {s.grid_step_s!r}")
    cond = condition(track, s.conditioning)
    grid = resample_uniform(cond, s.grid_step_s)
    gx, gy = grid["x_m"].to_numpy(), grid["y_m"].to_numpy()
    gvx, gvy = grid["vx_mps"].to_numpy(), grid["vy_mps"].to_numpy()
    gv = grid["speed_mps"].to_numpy()
    gt = grid["t_s"].to_numpy()
    shore = estimate_shore(gx, gy, gv, gvx, gvy)
    net = net_speed(gt, gx, gy, grid["piece"].to_numpy(), s.states.net_window_s)
    # each gap-free piece is decoded as its own chain (after a long pause anything goes)
    labels = np.empty(len(gt), dtype=np.int8)
    piece = grid["piece"].to_numpy()
    cut = np.flatnonzero(np.diff(piece)) + 1
    for a, b in zip(np.concatenate(([0], cut)), np.concatenate((cut, [len(gt)]))):
        labels[a:b] = label_states(
            gv[a:b], gvx[a:b], gvy[a:b], gx[a:b], gy[a:b], shore, s.states, step_s=s.grid_step_s, net_speed_mps=net[a:b]
        )
    cos_shore = shore.cos_shoreward(gvx, gvy) if shore.known else np.zeros(len(gv))
    labels = clean_ride_labels(labels, gt, gv, cos_shore, s.rides)
    labels = reject_scattered_rides(labels, gx, gy, s.rides)
    labels = require_water_context(labels, gt, gv, s.rides)
    rides = extract_rides(labels, gt, gv, cond, s.rides, seed=s.onset_seed)
    missed = find_missed_waves(labels, gt, gv, cos_shore, s.rides)
    ride_idx = np.full(len(gt), -1, dtype=np.int32)
    for r in rides:
        # the ride begins at its start (onset or take-off): the catch before it is paddling
        labels[(gt >= r.first_ride_s) & (gt < r.start_s)] = PADDLE
        labels[(gt >= r.start_s) & (gt <= r.end_s)] = RIDE
        ride_idx[(gt >= r.start_s) & (gt <= r.end_s)] = r.index
    bounds = piece_bounds_s(cond)
    metrics = session_metrics(track.duration_s, gt, gx, gy, grid["piece"].to_numpy(), labels, rides, missed, s.grid_step_s, bounds)
    samples = pd.DataFrame(
        {
            "time": track.start + pd.to_timedelta(gt, unit="s"),
            "t_s": gt,
            "x_m": gx,
            "y_m": gy,
            "speed_mps": gv,
            "speed_sd_mps": grid["speed_sd_mps"].to_numpy(),
            "cross_shore_m": shore.cross_shore_m(gx, gy) if shore.known else np.full(len(gt), np.nan),
            "land_margin_m": shore.land_margin_m(gx, gy) if shore.known else np.full(len(gt), np.nan),
            "state": pd.Categorical.from_codes(labels.astype(np.int8), categories=list(STATES)),
            "ride": ride_idx,
            "piece": grid["piece"].to_numpy(),
        }
    )
    return SessionAnalysis(
        track=track,
        settings=s,
        conditioned=cond,
        samples=samples,
        rides=rides,
        missed_waves=missed,
        metrics=metrics,
        shore=shore,
    )


def analyse_file(path_or_bytes, **kw) -> SessionAnalysis:
    """Read a GPX file (path or bytes) with :func:`sessions.gpx.read_gpx` and analyse it.

    Keyword arguments go to :func:`analyse` (``settings=``); any other keyword goes to
    ``read_gpx``.
    """
    from sessions.gpx import read_gpx

    settings = kw.pop("settings", None)
    if isinstance(path_or_bytes, str):
        path_or_bytes = Path(path_or_bytes)
    track = read_gpx(path_or_bytes, **kw)
    return analyse(track, settings=settings)


# --- pure functions ----------------------------------------------------------------------
def iso_utc(ts) -> str:
    """ISO-8601 UTC time ending in ``Z``; milliseconds only when not whole seconds."""
    ts = pd.Timestamp(ts)
    if ts.tzinfo is None:
        ts = ts.tz_localize("UTC")
    else:
        ts = ts.tz_convert("UTC")
    ts = ts.round("ms")
    text = ts.strftime("%Y-%m-%dT%H:%M:%S")
    ms = ts.microsecond // 1000
    if ms:
        text += f".{ms:03d}"
    return text + "Z"


def iso_utc_offsets(start: pd.Timestamp, offsets_s) -> list[str]:
    """``[iso_utc(start + pd.Timedelta(seconds=float(v))) for v in offsets_s]``, in bulk.

    The same texts as :func:`iso_utc` (each offset converted by ``pd.Timedelta`` exactly
    as there, rounded to milliseconds half to even like ``Timestamp.round``), formatted by
    numpy instead of one ``strftime`` per time.
    """
    start = pd.Timestamp(start)
    start = start.tz_localize("UTC") if start.tzinfo is None else start.tz_convert("UTC")
    base = start.as_unit("ns").value
    ns = np.fromiter((base + pd.Timedelta(seconds=float(v)).value for v in offsets_s), dtype=np.int64)
    q, r = np.divmod(ns, 1_000_000)
    ms = q + ((r > 500_000) | ((r == 500_000) & (q % 2 == 1)))
    text = np.datetime_as_string(ms.astype("datetime64[ms]"), unit="ms")
    whole = ms % 1000 == 0
    return [(x[:-4] if w else x) + "Z" for x, w in zip(text.tolist(), whole.tolist())]


def piece_bounds_s(cond: ConditionedTrack) -> dict[int, tuple[float, float]]:
    """Times [s] of the first and last fix of each gap-free piece."""
    p = cond.piece
    if len(p) == 0:
        return {}
    cut = np.flatnonzero(np.diff(p)) + 1
    starts = np.concatenate(([0], cut))
    ends = np.concatenate((cut, [len(p)])) - 1
    return {int(p[a]): (float(cond.t_s[a]), float(cond.t_s[b])) for a, b in zip(starts, ends)}


def _num(v) -> float | None:
    """A finite float, or None (strict JSON has no NaN)."""
    if v is None:
        return None
    f = float(v)
    return f if math.isfinite(f) else None


__all__ = [
    "ANALYSIS_VERSION",
    "AnalysisSettings",
    "SessionAnalysis",
    "analyse",
    "analyse_file",
    "iso_utc",
    "iso_utc_offsets",
    "RIDE",
]
