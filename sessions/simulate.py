"""Session simulator: surf sessions with known truth, for accuracy tests and the demo.

A session is built in a local metric frame of an invented straight beach (``x`` seaward
from the water line, ``y`` along the shore, to the right when facing the sea). The true
motion is generated at a base step of :data:`DT_S` seconds as a chain of phases: standing
and walking on the beach, paddling out through the break (with duck dives), waiting in
the line-up (drift with the current, bobbing on the swell), sprint-paddling for waves
(some missed), the catch (slow displacement-mode acceleration while the wave lifts the
board), the planing onset, the ride (fast acceleration, trim or turns, then a kick-out
or a fall), paddling back out, and at the end paddling in and walking up the beach.

The observed track adds consumer-GPS errors to that motion: a slowly wandering position
error (second-order Gauss-Markov), the integral of the receiver's own velocity error
(which its navigation filter carries into the position), white noise, rare outlier
jumps, dropouts (the watch under
water after falls and duck dives), one of three sampling schemes, optional device speed
and elevation. The truth (:attr:`SimulatedSession.truth`, schema ``floatlift.truth/1``)
describes the noise-free motion; ``docs/simulator.md`` documents it.

Everything random comes from one :class:`numpy.random.Generator` seeded by
:attr:`SimConfig.seed`, drawn in a fixed order, so a seed always gives the same session.

This is a reasoned model for testing software, not a prediction of any real session.
"""

from __future__ import annotations

import dataclasses
import gzip
import json
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.signal import lfilter

from sessions.errors import SimulationError
from sessions.geodesy import LocalFrame
from sessions.gpx_write import write_gpx
from sessions.track import COL_ELE, COL_LAT, COL_LON, COL_SEGMENT, COL_SPEED, COL_TIME, COLUMNS
from sessions.units import G_N

#: Base time step of the true motion [s]; 5 Hz fixes fall exactly on it.
DT_S = 0.2
_STEPS_PER_S = 5

#: Truth states, in code order.
STATES = ("shore", "paddle", "wait", "ride")
SHORE, PADDLE, WAIT, RIDE = range(4)

TRUTH_SCHEMA = "floatlift.truth/1"
#: Where a session starts and ends: on the beach, this far landward of the water line [m].
BEACH_START_X_M = -45.0
SAMPLINGS = ("1hz", "5hz", "smart")
STYLES = ("short", "long")

#: Density of sea water used by the onset link [kg/m^3]: TEOS-10 at SA=35 g/kg,
#: CT=15 degC, p=0 (gsw.rho gives 1025.85; rounded).
SEA_WATER_RHO_KG_M3 = 1025.0
#: Lift coefficient of the planing bottom near onset (model choice, see
#: :func:`board_onset_speed_mps`).
ONSET_LIFT_COEFFICIENT = 0.14
#: Share of the weight carried by dynamic lift at the onset (model choice).
ONSET_DYNAMIC_SHARE = 0.5
#: McCowan breaker index H_b/d_b (McCowan 1894, Phil. Mag. 38:351; solitary-wave limit).
MCCOWAN_BREAKER_INDEX = 0.78


# ======================================================================================
# Configuration and result
# ======================================================================================
@dataclass(frozen=True)
class SimConfig:
    """Settings of one simulated session (all SI; ``None`` means "draw from the seed").

    Parameters
    ----------
    seed : int
        Seed of the random generator; the same config gives the same session.
    sampling : {"1hz", "5hz", "smart"}
        Fix schedule: every second, every 0.2 s, or irregular 1-8 s intervals that are
        denser while moving fast (a battery-saving recording mode).
    duration_s : float
        Target session length from the first to the last fix [s] (met within about a
        minute; the session ends with paddling in and walking up the beach).
    board_onset_mps : float
        The board-and-rider planing onset speed [m/s]; each ride draws its own onset
        around it with spread ``onset_scatter_mps``.
    style : {"short", "long"}
        Riding style: turns (shortboard) or long trim lines (longboard).
    wave_face_m : float
        Breaking wave face height [m]; sets wave speed and so riding speed.
    wave_period_s : float
        Swell period [s]; sets the bobbing in the line-up.
    reported_speed : bool
        Add a device speed (Doppler) to each fix: the receiver's velocity (true velocity
        plus its velocity error, the one that also moves the positions) plus a little
        jitter.
    elevation : bool
        Add an elevation to each fix.
    """

    seed: int = 0
    sampling: str = "1hz"
    duration_s: float = 5400.0
    board_onset_mps: float = 3.2
    style: str = "short"
    wave_face_m: float = 1.2
    wave_period_s: float = 10.0
    reported_speed: bool = False
    elevation: bool = False
    start: str = "2026-04-18T07:00:00Z"
    origin_lat: float = 44.1302
    origin_lon: float = -1.3121
    seaward_bearing_deg: float = 277.0
    lineup_offshore_m: float | None = None  # drawn 100-300 m
    onset_scatter_mps: float = 0.25
    mean_wait_s: float = 120.0  # mean wait in the line-up before each attempt
    catch_rate: float = 0.65  # share of attempts that become rides
    current_mps: float | None = None  # drawn 0.02-0.20 m/s
    paddle_speed_mps: float | None = None  # drawn 0.9-1.2 m/s
    gps_sigma_m: float | None = None  # slowly wandering error per axis, drawn 1.5-5 m
    gps_tau_s: float = 60.0  # its time constant (second order: two stages of this)
    gps_velocity_sd_mps: float | None = None  # receiver velocity error per axis, drawn 0.05-0.20
    gps_velocity_tau_s: float = 1.0  # its correlation time
    gps_pull_s: float = 20.0  # how fast the receiver's ranges pull the integrated error back
    gps_white_m: float = 0.1  # white error per fix and axis
    outlier_rate: float = 1.0 / 2000.0  # per fix
    dropouts: bool = True
    speed_noise_mps: float = 0.05  # device speed jitter per fix, on top of the velocity error
    decimals: int = 7  # GPX coordinate decimals
    name: str | None = None  # GPX track name

    def __post_init__(self) -> None:
        def bad(msg: str) -> SimulationError:
            return SimulationError(f"simulator setting {msg}")

        if isinstance(self.seed, bool) or not isinstance(self.seed, (int, np.integer)) or self.seed < 0:
            raise bad(f"seed={self.seed!r} is not a whole number >= 0")
        if self.sampling not in SAMPLINGS:
            raise bad(f"sampling={self.sampling!r} is not one of {', '.join(SAMPLINGS)}")
        if self.style not in STYLES:
            raise bad(f"style={self.style!r} is not one of {', '.join(STYLES)}")
        checks = [
            ("duration_s", self.duration_s, 300.0, 6 * 3600.0),
            ("board_onset_mps", self.board_onset_mps, 1.5, 6.0),
            ("wave_face_m", self.wave_face_m, 0.3, 4.0),
            ("wave_period_s", self.wave_period_s, 4.0, 25.0),
            ("onset_scatter_mps", self.onset_scatter_mps, 0.0, 1.0),
            ("mean_wait_s", self.mean_wait_s, 5.0, 1200.0),
            ("catch_rate", self.catch_rate, 0.05, 1.0),
            ("gps_tau_s", self.gps_tau_s, 1.0, 600.0),
            ("gps_white_m", self.gps_white_m, 0.0, 20.0),
            ("gps_velocity_tau_s", self.gps_velocity_tau_s, 0.2, 30.0),
            ("gps_pull_s", self.gps_pull_s, 1.0, 600.0),
            ("outlier_rate", self.outlier_rate, 0.0, 0.05),
            ("speed_noise_mps", self.speed_noise_mps, 0.0, 2.0),
            ("origin_lat", self.origin_lat, -80.0, 80.0),
            ("origin_lon", self.origin_lon, -180.0, 180.0),
            ("seaward_bearing_deg", self.seaward_bearing_deg, 0.0, 360.0),
            ("decimals", self.decimals, 5, 9),
        ]
        for name, value, lo, hi in [*checks, *self._optional_checks()]:
            if not (isinstance(value, (int, float)) and math.isfinite(value) and lo <= value <= hi):
                raise bad(f"{name}={value!r} is outside {lo:g}..{hi:g}")
        try:
            _parse_start(self.start)
        except ValueError as exc:
            raise bad(f"start={self.start!r} is not an ISO-8601 time: {exc}") from exc

    def _optional_checks(self):
        for name, lo, hi in (
            ("lineup_offshore_m", 40.0, 600.0),
            ("current_mps", 0.0, 1.0),
            ("paddle_speed_mps", 0.4, 2.0),
            ("gps_sigma_m", 0.0, 30.0),
            ("gps_velocity_sd_mps", 0.0, 2.0),
        ):
            value = getattr(self, name)
            if value is not None:
                yield name, value, lo, hi


@dataclass(frozen=True)
class SimulatedSession:
    """A simulated session: observed fixes and the truth of the motion behind them.

    Attributes
    ----------
    config : SimConfig
    points : DataFrame
        Observed fixes in the track schema of :mod:`sessions.track`.
    truth : dict
        The truth document (schema ``floatlift.truth/1``, see ``docs/simulator.md``).
    true_motion : DataFrame
        The noise-free motion at the base step: ``t_s``, ``x_m`` (seaward), ``y_m``
        (along the shore), ``speed_mps``, ``state`` (code into :data:`STATES`).
    """

    config: SimConfig
    points: pd.DataFrame
    truth: dict
    true_motion: pd.DataFrame

    def gpx_bytes(self) -> bytes:
        """The observed track as a GPX 1.1 document."""
        return write_gpx(
            self.points, name=self.config.name, creator="floatlift simulator", decimals=self.config.decimals
        )

    def write(self, path, *, truth_gzip: bool = False) -> tuple[Path, Path]:
        """Write the GPX (gzip-compressed when the name ends in ``.gz``) and the truth.

        The truth goes beside the track as ``<stem>.truth.json`` (``.truth.json.gz``
        with ``truth_gzip``), where ``<stem>`` is the name without ``.gpx``/``.gpx.gz``.

        Returns
        -------
        (track_path, truth_path)
        """
        path = Path(path)
        data = self.gpx_bytes()
        if path.name.endswith(".gz"):
            data = gzip.compress(data, compresslevel=9, mtime=0)
        path.write_bytes(data)
        truth_path = truth_path_for(path, gz=truth_gzip)
        text = json.dumps(self.truth, separators=(",", ":")).encode("utf-8")
        if truth_gzip:
            text = gzip.compress(text, compresslevel=9, mtime=0)
        truth_path.write_bytes(text)
        return path, truth_path


def truth_path_for(track_path, *, gz: bool = False) -> Path:
    """Where the truth of a simulated track lives: ``<stem>.truth.json[.gz]``."""
    track_path = Path(track_path)
    name = track_path.name
    for suffix in (".gpx.gz", ".gpx", ".gz"):
        if name.lower().endswith(suffix):
            name = name[: -len(suffix)]
            break
    return track_path.with_name(name + (".truth.json.gz" if gz else ".truth.json"))


def read_truth(path) -> dict:
    """Read a truth document (plain or gzip-compressed JSON).

    Raises
    ------
    SimulationError
        When the file is not a ``floatlift.truth/1`` document.
    """
    path = Path(path)
    try:
        raw = path.read_bytes()
        if raw[:2] == b"\x1f\x8b":
            raw = gzip.decompress(raw)
        doc = json.loads(raw.decode("utf-8"))
    except (OSError, ValueError, EOFError) as exc:
        raise SimulationError(f"{path.name}: cannot read truth document: {exc}") from exc
    if not isinstance(doc, dict) or doc.get("schema") != TRUTH_SCHEMA:
        raise SimulationError(f"{path.name}: not a {TRUTH_SCHEMA} document")
    return doc


# ======================================================================================
# Pipeline
# ======================================================================================
def simulate_session(config: SimConfig | None = None, **overrides) -> SimulatedSession:
    """Simulate one surf session.

    Parameters
    ----------
    config : SimConfig, optional
        Settings; keyword ``overrides`` replace single fields
        (``simulate_session(seed=3, sampling="5hz")``).

    Returns
    -------
    SimulatedSession
    """
    if config is None:
        config = SimConfig(**overrides)
    elif overrides:
        config = dataclasses.replace(config, **overrides)
    rng = np.random.default_rng(config.seed)
    scene = _draw_scene(config, rng)
    line = _Timeline()
    _build_motion(config, scene, line, rng)
    motion = line.finish()
    obs = _observe(config, scene, motion, rng)
    truth = _truth_document(config, scene, motion, line)
    true_motion = pd.DataFrame(
        {
            "t_s": motion["t_s"],
            "x_m": motion["x_m"],
            "y_m": motion["y_m"],
            "speed_mps": motion["speed_mps"],
            "state": motion["state"],
        }
    )
    return SimulatedSession(config=config, points=obs, truth=truth, true_motion=true_motion)


# ======================================================================================
# Scene and motion
# ======================================================================================
@dataclass(frozen=True)
class _Scene:
    lineup_x_m: float
    lineup_y_m: float
    current_x_mps: float
    current_y_mps: float
    paddle_speed_mps: float
    gps_sigma_m: float
    gps_velocity_sd_mps: float
    wave_speed_mps: float
    orbital_mps: float
    ride_dir: int  # +1 or -1: favoured direction along the shore


def _draw_scene(cfg: SimConfig, rng: np.random.Generator) -> _Scene:
    lineup_x = cfg.lineup_offshore_m if cfg.lineup_offshore_m is not None else rng.uniform(100.0, 300.0)
    current = cfg.current_mps if cfg.current_mps is not None else rng.uniform(0.02, 0.20)
    cur_dir = rng.uniform(0.0, 2 * math.pi)
    paddle = cfg.paddle_speed_mps if cfg.paddle_speed_mps is not None else rng.uniform(0.9, 1.2)
    sigma = cfg.gps_sigma_m if cfg.gps_sigma_m is not None else rng.uniform(1.5, 5.0)
    vel_sd = cfg.gps_velocity_sd_mps if cfg.gps_velocity_sd_mps is not None else rng.uniform(0.05, 0.20)
    ride_dir = 1 if rng.random() < 0.5 else -1
    return _Scene(
        lineup_x_m=float(lineup_x),
        lineup_y_m=0.0,
        current_x_mps=float(current * math.cos(cur_dir) * 0.5),  # weaker across the shore
        current_y_mps=float(current * math.sin(cur_dir)),
        paddle_speed_mps=float(paddle),
        gps_sigma_m=float(sigma),
        gps_velocity_sd_mps=float(vel_sd),
        wave_speed_mps=breaking_wave_speed_mps(cfg.wave_face_m),
        orbital_mps=float(min(0.35, math.pi * cfg.wave_face_m / cfg.wave_period_s * 0.3)),
        ride_dir=ride_dir,
    )


class _Timeline:
    """Appends phases of true motion (velocity per base step) and records events."""

    def __init__(self) -> None:
        self.vx: list[np.ndarray] = []
        self.vy: list[np.ndarray] = []
        self.state: list[np.ndarray] = []
        self.n = 0
        self.x = BEACH_START_X_M
        self.y = 0.0
        self.rides: list[dict] = []
        self.missed: list[tuple[int, int]] = []
        self.falls: list[int] = []  # base index of each fall (watch goes under)
        self.duck_dives: list[int] = []

    def add(self, state: int, vx: np.ndarray, vy: np.ndarray) -> int:
        vx = np.asarray(vx, dtype=float)
        vy = np.asarray(vy, dtype=float)
        start = self.n
        if vx.size == 0:
            return start
        self.vx.append(vx)
        self.vy.append(vy)
        self.state.append(np.full(vx.size, state, dtype=np.int8))
        self.n += vx.size
        self.x += float(vx.sum()) * DT_S
        self.y += float(vy.sum()) * DT_S
        return start

    @property
    def t_s(self) -> float:
        return self.n * DT_S

    def finish(self) -> dict:
        vx = np.concatenate(self.vx)
        vy = np.concatenate(self.vy)
        state = np.concatenate(self.state)
        x = BEACH_START_X_M + np.concatenate(([0.0], np.cumsum(vx)[:-1])) * DT_S
        y = np.concatenate(([0.0], np.cumsum(vy)[:-1])) * DT_S
        return {
            "t_s": np.arange(vx.size) * DT_S,
            "x_m": x,
            "y_m": y,
            "vx": vx,
            "vy": vy,
            "speed_mps": np.hypot(vx, vy),
            "state": state,
            "falls": np.asarray(self.falls, dtype=np.int64),
            "dives": np.asarray(self.duck_dives, dtype=np.int64),
        }


def _steps(duration_s: float) -> int:
    return max(1, int(round(duration_s / DT_S)))


def _heading_xy(speed: np.ndarray, heading: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Velocity components from speed and heading (0 = seaward, +pi/2 = +y along shore)."""
    return speed * np.cos(heading), speed * np.sin(heading)


def _stroke(n: int, mean_mps: float, rng: np.random.Generator, depth: float = 0.25) -> np.ndarray:
    """Paddling speed: arm strokes at 0.5-1 Hz modulate the speed by about +-``depth``."""
    f_hz = rng.uniform(0.5, 1.0)
    phase = rng.uniform(0, 2 * math.pi)
    t = np.arange(n) * DT_S
    wobble = 1.0 + 0.06 * np.sin(2 * math.pi * t / rng.uniform(20.0, 40.0) + rng.uniform(0, 6.3))
    return np.maximum(0.0, mean_mps * wobble * (1.0 + depth * np.sin(2 * math.pi * f_hz * t + phase)))


def _drift(n: int, scene: _Scene, rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:
    """Current plus a slowly wandering part (first-order filtered noise, ~0.03 m/s)."""
    a = math.exp(-DT_S / 20.0)
    gain = 0.03 * math.sqrt(1 - a * a)
    wx = lfilter([gain], [1, -a], rng.standard_normal(n))
    wy = lfilter([gain], [1, -a], rng.standard_normal(n))
    return scene.current_x_mps + wx, scene.current_y_mps + wy


def _walk(line: _Timeline, to_x: float, to_y: float, rng: np.random.Generator) -> None:
    speed_mps = rng.uniform(1.1, 1.45)
    dx, dy = to_x - line.x, to_y - line.y
    dist = math.hypot(dx, dy)
    n = _steps(dist / speed_mps)
    t = np.arange(n) * DT_S
    v = speed_mps * (1 + 0.08 * np.sin(2 * math.pi * 1.8 * t))  # gait
    v *= dist / max(1e-9, float(v.sum()) * DT_S)
    heading = math.atan2(dy, dx)
    line.add(SHORE, v * math.cos(heading), v * math.sin(heading))


def _stand(line: _Timeline, duration_s: float, rng: np.random.Generator) -> None:
    n = _steps(duration_s)
    a = math.exp(-DT_S / 3.0)
    vx = lfilter([0.08 * math.sqrt(1 - a * a)], [1, -a], rng.standard_normal(n))
    vy = lfilter([0.08 * math.sqrt(1 - a * a)], [1, -a], rng.standard_normal(n))
    line.add(SHORE, vx, vy)


def _paddle_to(
    line: _Timeline,
    cfg: SimConfig,
    scene: _Scene,
    to_x: float,
    to_y: float,
    rng: np.random.Generator,
    *,
    duck_dives: bool,
) -> None:
    """Paddle (state ``paddle``) toward a point, with duck dives inside the break."""
    dx, dy = to_x - line.x, to_y - line.y
    dist = math.hypot(dx, dy)
    if dist < 1.0:
        return
    mean = scene.paddle_speed_mps * rng.uniform(0.9, 1.1)
    n = _steps(dist / mean)
    speed = _stroke(n, mean, rng)
    heading = math.atan2(dy, dx) + rng.normal(0.0, 0.05)
    vx, vy = _heading_xy(speed, np.full(n, heading))
    cx, cy = _drift(n, scene, rng)
    vx, vy = vx + cx, vy + cy
    # steer against the drift so the paddler arrives where they aimed
    vx += (dx - float(vx.sum()) * DT_S) / (n * DT_S)
    vy += (dy - float(vy.sum()) * DT_S) / (n * DT_S)
    if duck_dives and to_x > line.x:
        # whitewater between here and the line-up: about one duck dive per 60 m, more in
        # bigger surf; each stops the paddler for 3-5 s and pushes them 0.5-1.5 m/s back
        inside_m = max(0.0, min(to_x, scene.lineup_x_m - 10.0) - line.x)
        k = rng.poisson(inside_m / 60.0 * min(2.0, cfg.wave_face_m / 1.2))
        for centre in np.sort(rng.uniform(0.05, 0.6, size=k)):
            i0 = int(centre * n)
            m = _steps(rng.uniform(3.0, 5.0))
            i1 = min(n, i0 + m)
            if i1 - i0 < 3:
                continue
            window = np.sin(np.linspace(0, math.pi, i1 - i0))
            push = rng.uniform(0.5, 1.5)
            vx[i0:i1] = vx[i0:i1] * (1 - window) - push * window
            vy[i0:i1] = vy[i0:i1] * (1 - window)
            line.duck_dives.append(line.n + i0)
    line.add(PADDLE, vx, vy)


def _wait(line: _Timeline, cfg: SimConfig, scene: _Scene, duration_s: float, rng: np.random.Generator) -> None:
    """Sit in the line-up: drift with the current and bob on the swell."""
    n = _steps(duration_s)
    t = np.arange(n) * DT_S
    cx, cy = _drift(n, scene, rng)
    bob = scene.orbital_mps * np.sin(2 * math.pi * t / cfg.wave_period_s + rng.uniform(0, 2 * math.pi))
    line.add(WAIT, cx + bob, cy + 0.3 * bob)


def _ramp(v0: float, v1: float, n: int) -> np.ndarray:
    return np.linspace(v0, v1, n, endpoint=False) if n > 0 else np.zeros(0)


def _attempt(line: _Timeline, cfg: SimConfig, scene: _Scene, rng: np.random.Generator) -> bool:
    """Sprint-paddle for a wave; either miss it or catch it and ride. Returns True if ridden."""
    caught = bool(rng.random() < cfg.catch_rate)
    # peaks break both ways; most rides go the session's favoured way along the shore
    ride_dir = scene.ride_dir if rng.random() < 0.7 else -scene.ride_dir
    angle = ride_dir * rng.uniform(0.0, 0.35)  # a little off straight shoreward
    heading = math.pi - angle
    v_sprint = rng.uniform(1.3, 1.8)
    n_up = _steps(rng.uniform(1.0, 2.0))
    n_hold = _steps(rng.uniform(1.5, 5.0))
    speed = np.concatenate((_ramp(0.3, v_sprint, n_up), _stroke(n_hold, v_sprint, rng, depth=0.15)))
    if not caught:
        n_down = _steps(rng.uniform(2.0, 4.0))
        speed = np.concatenate((speed, _ramp(v_sprint, rng.uniform(0.1, 0.4), n_down)))
        vx, vy = _heading_xy(speed, np.full(speed.size, heading))
        start = line.add(PADDLE, vx, vy)
        line.missed.append((start, line.n))
        return False

    # --- the catch: the wave lifts the board; displacement-mode acceleration ---------
    onset = float(np.clip(rng.normal(cfg.board_onset_mps, cfg.onset_scatter_mps), 1.6, 6.5))
    v0 = min(rng.uniform(1.0, 1.5), onset - 0.3)
    speed = np.concatenate((_ramp(0.3, v_sprint, n_up), _stroke(n_hold, v_sprint, rng, depth=0.15)))
    speed[-n_hold:] = np.minimum(speed[-n_hold:], v0 + 0.2)
    vx, vy = _heading_xy(speed, np.full(speed.size, heading))
    sprint_start = line.add(PADDLE, vx, vy)
    a_catch = rng.uniform(0.2, 0.5)
    n_catch = _steps((onset - v0) / a_catch)
    speed = v0 + (onset - v0) * np.arange(n_catch) / n_catch
    # a slow catch from an inside position would run up the beach: angle it along the
    # wave so that it ends at least 40 m out (the ride below keeps to 15 m and more)
    catch_shoreward_m = float(np.sum(speed)) * DT_S * math.cos(angle)
    room_m = max(line.x - 40.0, 0.0)
    if catch_shoreward_m > room_m:
        frac = room_m / catch_shoreward_m * math.cos(angle)
        heading = math.pi - ride_dir * math.acos(frac)
    vx, vy = _heading_xy(speed, np.full(n_catch, heading))
    catch_start = line.add(PADDLE, vx, vy)

    # --- the ride: planing onset, acceleration, trim or turns, end ------------------
    long_style = cfg.style == "long"
    # surfer speed along the face V = c / sin(alpha), alpha the peel angle (Walker 1974;
    # Hutt, Black & Mead 2001): smaller angles (faster-peeling waves) give faster rides
    alpha = math.radians(rng.uniform(50.0, 75.0) if long_style else rng.uniform(35.0, 70.0))
    amp = 0.05 if long_style else 0.12
    cruise = scene.wave_speed_mps / math.sin(alpha)
    cruise = float(np.clip(cruise, max(4.0, onset + 1.2), 12.4 / (1 + amp)))
    a_plane = rng.uniform(1.5, 4.0)
    t_acc = (cruise - onset) / a_plane
    fall = bool(rng.random() < (0.25 if long_style else 0.35))
    t_dec = rng.uniform(1.0, 2.0) if fall else rng.uniform(1.5, 3.0)
    median = 13.0 if long_style else 9.0
    dur = float(np.clip(rng.lognormal(math.log(median), 0.55), 3.0, 44.0))
    n_acc, n_dec = _steps(t_acc), _steps(t_dec)
    n_cru = max(3, _steps(dur) - n_acc - n_dec - 1)  # the ride lasts dur (on the 0.2 s grid)
    period = rng.uniform(6.0, 12.0) if long_style else rng.uniform(2.5, 4.5)
    tc = np.arange(n_cru) * DT_S
    trend = 1.0 - rng.uniform(0.0, 0.15) * tc / max(tc[-1], 1.0)
    cru = cruise * trend * (1.0 + amp * np.sin(2 * math.pi * tc / period))
    v_end = rng.uniform(0.0, 1.0)
    speed = np.concatenate((_ramp(onset, cruise, n_acc), cru, _ramp(cru[-1], v_end, n_dec), [v_end]))
    # heading: from straight in toward the trim line, then turns about it
    beta0 = math.radians(rng.uniform(10.0, 25.0) if long_style else rng.uniform(15.0, 35.0))
    turn = math.radians(12.0 if long_style else 45.0)
    beta_catch = math.pi / 2 - abs(angle)
    for _ in range(6):  # keep the ride outside the shallows (x >= 15 m)
        beta = np.concatenate(
            (
                np.linspace(beta_catch, beta0, n_acc, endpoint=False),
                beta0 + turn * np.sin(2 * math.pi * tc / period),
                np.full(n_dec + 1, beta0 + (math.radians(-60.0) if not fall else 0.0)),
            )
        )
        # the whole path, not only its end, must stay outside the shallows: turns and the
        # seaward kick-out can put the deepest point of a ride before its last one
        deepest_shoreward_m = float(np.max(np.cumsum(speed * np.sin(beta)))) * DT_S
        if line.x - deepest_shoreward_m >= 15.0:
            break
        beta0 *= 0.5
        beta_catch *= 0.6
        turn *= 0.6
    # direction vector (-sin beta, dir * cos beta) in (x seaward, y alongshore)
    vx = -speed * np.sin(beta)
    vy = ride_dir * speed * np.cos(beta)
    ride_start = line.add(RIDE, vx, vy)
    ride_end = line.n  # first step after the ride (its speed is back to paddling levels)
    spd = np.hypot(vx, vy)
    line.rides.append(
        {
            "paddle_start": sprint_start,
            "catch_start": catch_start,
            "start": ride_start,
            "end": ride_end,
            "onset_speed_mps": float(spd[0]),
            "peak_speed_mps": float(spd.max()),
            "distance_m": float(spd.sum() * DT_S),
            "ending": "fall" if fall else "kick-out",
        }
    )
    if fall:
        line.falls.append(ride_end)
        # board recovery in the whitewater: near standstill, pushed a little shoreward
        n = _steps(rng.uniform(3.0, 8.0))
        line.add(WAIT, np.full(n, -rng.uniform(0.05, 0.3)), np.zeros(n))
    return True


def _build_motion(cfg: SimConfig, scene: _Scene, line: _Timeline, rng: np.random.Generator) -> None:
    entry_y = rng.uniform(-60.0, 60.0)
    _stand(line, rng.uniform(30.0, 120.0), rng)  # on the beach, watch started
    _walk(line, 0.0, entry_y, rng)
    walk_back_s = 60.0
    lineup_y = entry_y + rng.uniform(-40.0, 40.0)
    _paddle_to(line, cfg, scene, scene.lineup_x_m, lineup_y, rng, duck_dives=True)
    missed_last = False
    while True:
        reserve = line.x / scene.paddle_speed_mps + walk_back_s + 30.0
        if line.t_s >= cfg.duration_s - reserve:
            break
        # back to the spot first when the rides or the current carried us away
        spot_x = scene.lineup_x_m + rng.normal(0.0, 8.0)
        spot_y = lineup_y + rng.normal(0.0, 10.0)
        if math.hypot(line.x - spot_x, line.y - spot_y) > 20.0:
            _paddle_to(line, cfg, scene, spot_x, spot_y, rng, duck_dives=True)
        wait_s = max(5.0, rng.exponential(cfg.mean_wait_s))
        if missed_last and rng.random() < 0.5:
            wait_s = rng.uniform(5.0, 20.0)  # waves come in sets: the next one is close
        wait_s = min(wait_s, max(5.0, cfg.duration_s - reserve - line.t_s))
        _wait(line, cfg, scene, wait_s, rng)
        missed_last = not _attempt(line, cfg, scene, rng)
        # drift of the take-off spot along the shore over the session (sand bars move)
        lineup_y += rng.normal(0.0, 3.0)
    # paddle in, walk up the beach back toward where we came in
    _paddle_to(line, cfg, scene, 0.0, line.y + rng.uniform(-20, 20), rng, duck_dives=False)
    _walk(line, BEACH_START_X_M, entry_y + rng.uniform(-15.0, 15.0), rng)
    # stand on the beach until the watch is stopped, at least at the target length
    need_s = (math.ceil((cfg.duration_s - line.t_s) / DT_S - 1e-9) + 1) * DT_S
    _stand(line, max(rng.uniform(10.0, 40.0), need_s), rng)


# ======================================================================================
# Observation: GPS errors and sampling
# ======================================================================================
def _observe(cfg: SimConfig, scene: _Scene, motion: dict, rng: np.random.Generator) -> pd.DataFrame:
    n = motion["t_s"].size
    speed = motion["speed_mps"]
    if cfg.sampling == "5hz":
        idx = np.arange(n)
    elif cfg.sampling == "1hz":
        idx = np.arange(0, n, _STEPS_PER_S)
    else:
        idx = _smart_schedule(speed, rng)

    # position error per axis: slow wander plus the receiver's integrated velocity error
    ex, ux = _position_error(n, cfg, scene, rng)
    ey, uy = _position_error(n, cfg, scene, rng)

    keep = np.ones(n, dtype=bool)
    if cfg.dropouts:
        windows = []
        for i in motion["falls"]:
            if rng.random() < 0.6:
                windows.append((i + _steps(0.5), _steps(rng.uniform(5.0, 30.0))))
        for i in motion["dives"]:
            if rng.random() < 0.5:
                windows.append((i, _steps(rng.uniform(5.0, 15.0))))
        n_random = rng.poisson(n * DT_S / 3600.0 * 1.5)
        for i in rng.integers(0, n, size=n_random):
            windows.append((int(i), _steps(rng.uniform(5.0, 60.0))))
        for i0, length in windows:
            keep[i0 : i0 + length] = False
        keep[0] = keep[-1] = True
    idx = idx[keep[idx]]
    m = idx.size

    xs = motion["x_m"][idx] + ex[idx] + rng.normal(0, cfg.gps_white_m, m)
    ys = motion["y_m"][idx] + ey[idx] + rng.normal(0, cfg.gps_white_m, m)
    # rare outliers: single fixes thrown 20-200 m in a random direction
    out = np.flatnonzero(rng.random(m) < cfg.outlier_rate)
    jump = rng.uniform(20.0, 200.0, out.size)
    ang = rng.uniform(0, 2 * math.pi, out.size)
    xs[out] += jump * np.cos(ang)
    ys[out] += jump * np.sin(ang)

    lat, lon = local_to_latlon(cfg, xs, ys)
    start = _parse_start(cfg.start)
    times = start + pd.to_timedelta(np.round(motion["t_s"][idx] * 1e3).astype(np.int64), unit="ms")
    if cfg.reported_speed:
        # the receiver reports its own velocity solution: the true velocity plus the same
        # velocity error that moves its positions, plus a little jitter per fix
        vel = np.hypot(motion["vx"][idx] + ux[idx], motion["vy"][idx] + uy[idx])
        spd = np.maximum(0.0, vel + rng.normal(0.0, cfg.speed_noise_mps, m))
        spd = np.round(spd, 3)
    else:
        spd = np.full(m, np.nan)
    if cfg.elevation:
        # the beach rises about 3 m over 45 m; the sea is 0; vertical GPS error is
        # larger and slower than horizontal (Gauss-Markov, sigma 1.5 x horizontal)
        true_ele = np.clip(-motion["x_m"][idx] / 15.0, 0.0, 3.0)
        ez = _slow_error(n, 1.5 * scene.gps_sigma_m, cfg.gps_tau_s, rng)
        ele = np.round(true_ele + ez[idx] + rng.normal(0, 1.0, m), 1)
    else:
        ele = np.full(m, np.nan)
    df = pd.DataFrame(
        {
            COL_TIME: pd.DatetimeIndex(times).as_unit("ns"),
            COL_LAT: lat,
            COL_LON: lon,
            COL_ELE: ele,
            COL_SPEED: spd,
            COL_SEGMENT: np.zeros(m, dtype=np.int32),
        }
    )
    return df[list(COLUMNS)]


def _stationary_ar1(n: int, a: float, sd: float, rng: np.random.Generator) -> np.ndarray:
    """A stationary AR(1) series: coefficient ``a``, standard deviation ``sd``."""
    x0 = rng.standard_normal() * sd
    return lfilter([sd * math.sqrt(1.0 - a * a)], [1.0, -a], rng.standard_normal(n), zi=[a * x0])[0]


def _slow_error(n: int, sigma: float, tau_s: float, rng: np.random.Generator) -> np.ndarray:
    """Slowly wandering position error: a second-order Gauss-Markov process.

    Two first-order stages with time constant ``tau_s`` in series (white noise -> AR(1)
    -> the same low-pass again), so the error moves smoothly: standard deviation
    ``sigma``, rate of change sigma / tau_s (both from the spectrum
    c / (1 + (w tau)^2)^2). This is the part of the error that comes from satellite
    orbits and clocks, the atmosphere and the slowly changing geometry: metres of offset
    that change over minutes, at centimetres per second.
    """
    if sigma <= 0.0:
        return np.zeros(n)
    a = math.exp(-DT_S / tau_s)
    warm = int(math.ceil(5.0 * tau_s / DT_S))  # start from the stationary state
    first = _stationary_ar1(n + warm, a, 1.0, rng)
    second = lfilter([1.0 - a], [1.0, -a], first, zi=[a * first[0]])[0][warm:]
    # rescale by the exact variance of the two stages so the SD is sigma
    return second * (sigma / math.sqrt(_second_stage_variance(a)))


def _second_stage_variance(a: float) -> float:
    """Variance of (1 - a) / (1 - a z^-1) applied to a unit-variance AR(1) of coefficient a.

    The output is an AR(2) with a double pole at ``a`` driven by white noise of variance
    (1 - a)^2 (1 - a^2); an AR(2) with poles p, p has variance
    s2 (1 + p^2) / (1 - p^2)^3.
    """
    return (1.0 - a) ** 2 * (1.0 - a * a) * (1.0 + a * a) / (1.0 - a * a) ** 3


def _position_error(n: int, cfg: SimConfig, scene: _Scene, rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:
    """Position error of one horizontal axis at the base step [m].

    The slow wander (:func:`_slow_error`) plus what the receiver's velocity error does to
    the position: a receiver's navigation filter moves the position on with its own
    (Doppler-based) velocity, so a velocity error ``u`` (first-order Gauss-Markov, SD
    ``gps_velocity_sd_mps``, correlation time ``gps_velocity_tau_s``) is integrated into
    the position, while the range measurements pull that integral back with time
    constant ``gps_pull_s``: d' = u - d / T. Over a second or two the fixes then move by
    the true motion plus about ``u`` times the time, as they do on a real receiver.
    Returns the position error [m] and the velocity error ``u`` [m/s] (the receiver
    reports its velocity with that error as its device speed).
    """
    slow = _slow_error(n, scene.gps_sigma_m, cfg.gps_tau_s, rng)
    sd_v = scene.gps_velocity_sd_mps
    if sd_v <= 0.0:
        return slow, np.zeros(n)
    tv, tp = cfg.gps_velocity_tau_s, cfg.gps_pull_s
    warm = int(math.ceil(5.0 * max(tv, tp) / DT_S))
    u = _stationary_ar1(n + warm, math.exp(-DT_S / tv), sd_v, rng)
    # like the true positions, the position at a step holds the velocities before it
    d = lfilter([0.0, DT_S], [1.0, -math.exp(-DT_S / tp)], u)[warm:]
    return slow + d, u[warm:]


def _smart_schedule(speed: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """Irregular fixes, 1-8 s apart: every second while fast, sparse while slow."""
    n = speed.size
    # candidate interval at every base step, decided by the speed there
    fast = speed > 2.5
    medium = speed > 1.3
    draws = rng.integers(1, 9, size=n)  # 1..8 s
    gap_s = np.where(fast, 1, np.where(medium, np.minimum(draws, 3), np.maximum(draws, 3)))
    out = []
    i = 0
    while i < n:
        out.append(i)
        i += int(gap_s[i]) * _STEPS_PER_S
        # a sudden speed-up is noticed within one second
        j = out[-1] + _STEPS_PER_S
        while j < i and j < n:
            if fast[j]:
                i = j
                break
            j += _STEPS_PER_S
    if out[-1] != n - 1 and (n - 1) % _STEPS_PER_S == 0:
        out.append(n - 1)
    return np.asarray(out, dtype=np.int64)


# ======================================================================================
# Truth document
# ======================================================================================
def _iso(start: pd.Timestamp, t_s: float) -> str:
    ts = start + pd.Timedelta(milliseconds=int(round(t_s * 1000)))
    text = ts.strftime("%Y-%m-%dT%H:%M:%S")
    ms = ts.microsecond // 1000
    if ms:
        text += f".{ms:03d}".rstrip("0")
    return text + "Z"


def _truth_document(cfg: SimConfig, scene: _Scene, motion: dict, line: _Timeline) -> dict:
    start = _parse_start(cfg.start)
    state = motion["state"]
    n = state.size
    t_end = (n - 1) * DT_S
    change = np.flatnonzero(np.diff(state)) + 1
    bounds = np.concatenate(([0], change, [n - 1]))
    runs = []
    for i0, i1 in zip(bounds[:-1], bounds[1:]):
        runs.append({"state": STATES[state[i0]], "start": _iso(start, i0 * DT_S), "end": _iso(start, i1 * DT_S)})
    seconds = [STATES[s] for s in state[:: _STEPS_PER_S]]
    rides = []
    for k, r in enumerate(line.rides):
        rides.append(
            {
                "index": k,
                "paddle_start": _iso(start, r["paddle_start"] * DT_S),
                "catch_start": _iso(start, r["catch_start"] * DT_S),
                "start": _iso(start, r["start"] * DT_S),
                "end": _iso(start, r["end"] * DT_S),
                "start_s": round(r["start"] * DT_S, 3),
                "end_s": round(r["end"] * DT_S, 3),
                "onset_speed_mps": round(r["onset_speed_mps"], 4),
                "peak_speed_mps": round(r["peak_speed_mps"], 4),
                "duration_s": round((r["end"] - r["start"]) * DT_S, 3),
                "distance_m": round(r["distance_m"], 2),
                "ending": r["ending"],
            }
        )
    missed = [{"start": _iso(start, a * DT_S), "end": _iso(start, b * DT_S)} for a, b in line.missed]
    time_in_state = {s: round(float(np.sum(state[:-1] == code)) * DT_S, 1) for code, s in enumerate(STATES)}
    speed = motion["speed_mps"]
    return {
        "schema": TRUTH_SCHEMA,
        "seed": cfg.seed,
        "config": dataclasses.asdict(cfg),
        "start": _iso(start, 0.0),
        "end": _iso(start, t_end),
        "shore": {
            "origin_lat": cfg.origin_lat,
            "origin_lon": cfg.origin_lon,
            "seaward_bearing_deg": cfg.seaward_bearing_deg,
            "lineup_offshore_m": round(scene.lineup_x_m, 1),
        },
        "scene": {
            "gps_sigma_m": round(scene.gps_sigma_m, 3),
            "gps_velocity_sd_mps": round(scene.gps_velocity_sd_mps, 3),
            "current_mps": round(math.hypot(scene.current_x_mps, scene.current_y_mps), 3),
            "paddle_speed_mps": round(scene.paddle_speed_mps, 3),
            "wave_speed_mps": round(scene.wave_speed_mps, 3),
            "board_onset_mps": cfg.board_onset_mps,
        },
        "rides": rides,
        "missed_waves": missed,
        "states": runs,
        "seconds": seconds,
        "totals": {
            "duration_s": round(t_end, 1),
            "time_in_state_s": time_in_state,
            "rides": len(rides),
            "missed_waves": len(missed),
            "distance_m": round(float(speed[:-1].sum() * DT_S), 1),
            "mean_speed_mps": round(float(speed[:-1].mean()), 4),
        },
    }


# ======================================================================================
# Pure functions
# ======================================================================================
def _parse_start(text: str) -> pd.Timestamp:
    ts = pd.Timestamp(text)
    if ts.tzinfo is None:
        raise ValueError("it needs a time zone (end it with Z for UTC)")
    return ts.tz_convert("UTC").floor("s")


def local_to_latlon(cfg: SimConfig, x_m, y_m) -> tuple[np.ndarray, np.ndarray]:
    """Shore frame (``x`` seaward, ``y`` along the shore) to WGS84 latitude/longitude.

    The shore frame is turned into east/north by the seaward bearing; east/north are
    then inverted through :class:`sessions.geodesy.LocalFrame` at the shore origin, by
    fixed-point iteration from a spherical first guess (three steps reach 1e-9 m).
    """
    b = math.radians(cfg.seaward_bearing_deg)
    x = np.asarray(x_m, dtype=float)
    y = np.asarray(y_m, dtype=float)
    # seaward unit vector (sin b, cos b) in (east, north); alongshore to its right
    east = x * math.sin(b) + y * math.cos(b)
    north = x * math.cos(b) - y * math.sin(b)
    frame = LocalFrame(cfg.origin_lat, cfg.origin_lon)
    r_m = 6371008.8
    lat = cfg.origin_lat + np.degrees(north / r_m)
    lon = cfg.origin_lon + np.degrees(east / (r_m * math.cos(math.radians(cfg.origin_lat))))
    for _ in range(4):
        e_hat, n_hat = frame.to_local(lat, lon)
        lat = lat + np.degrees((north - n_hat) / r_m)
        lon = lon + np.degrees((east - e_hat) / (r_m * np.cos(np.radians(lat))))
    return lat, lon


def breaking_wave_speed_mps(face_m: float) -> float:
    """Speed of a breaking wave from its face height (solitary-wave celerity).

    Parameters
    ----------
    face_m : float
        Breaker height H_b [m].

    Returns
    -------
    float
        Celerity ``c = sqrt(g (d_b + H_b))`` [m/s] with breaking depth
        ``d_b = H_b / 0.78``.

    Notes
    -----
    Breaking depth from the McCowan (1894) breaker index 0.78; celerity from the
    amplitude-corrected shallow-water (solitary wave) approximation, which matches
    surf-zone observations better than ``sqrt(g d)`` (from memory).

    References
    ----------
    .. [1] J. McCowan, "On the highest wave of permanent type", Phil. Mag. 38:351 (1894).
    """
    if not (face_m > 0 and math.isfinite(face_m)):
        raise SimulationError(f"wave face height must be a positive number of metres, not {face_m!r}")
    depth_m = face_m / MCCOWAN_BREAKER_INDEX
    return math.sqrt(G_N * (depth_m + face_m))


def board_onset_speed_mps(
    planform_area_m2: float,
    total_mass_kg: float,
    *,
    water_density_kg_m3: float = SEA_WATER_RHO_KG_M3,
    lift_coefficient: float = ONSET_LIFT_COEFFICIENT,
    dynamic_share: float = ONSET_DYNAMIC_SHARE,
) -> float:
    """Planing onset speed of a board and rider from planform area and load.

    The onset is taken as the speed at which dynamic lift on the planing bottom carries
    a fixed share ``k`` of the weight ``W = m g``:
    ``0.5 rho v^2 A C_L = k W``, so ``v_onset = sqrt(2 k m g / (rho A C_L))``.
    Bigger and lighter-loaded boards plane earlier.

    Parameters
    ----------
    planform_area_m2 : float
        Area of the board outline seen from above [m^2].
    total_mass_kg : float
        Rider plus board plus gear [kg].
    water_density_kg_m3 : float
        Water density [kg/m^3]; default sea water (TEOS-10, SA 35 g/kg, 15 degC,
        rounded).
    lift_coefficient : float
        Lift coefficient ``C_L`` of the wetted bottom near onset, referred to the full
        planform area. Default 0.14: a model choice of the simulator. It is the order
        of Savitsky's (1964, eq. 15) flat-plate ``C_L0`` at 4-5 deg trim and low speed
        coefficients, scaled to the full planform; no published surfboard value exists.
    dynamic_share : float
        Share ``k`` of the weight carried dynamically at the onset (default 0.5, the
        point where the dynamic term equals the hydrostatic term; a model choice).

    Returns
    -------
    float
        Onset speed [m/s].

    Notes
    -----
    Only the ratio of load to area matters here: the link is meant to make the demo's
    boards and riders differ in a physically sensible direction, not to predict a real
    board. Example: 0.55 m^2 and 78 kg give about 3.1 m/s.

    References
    ----------
    .. [1] D. Savitsky, "Hydrodynamic design of planing hulls", Marine Technology
           1(1):71-94 (1964), eq. 15 (lift of a planing surface).
    """
    for name, value in (
        ("planform_area_m2", planform_area_m2),
        ("total_mass_kg", total_mass_kg),
        ("water_density_kg_m3", water_density_kg_m3),
        ("lift_coefficient", lift_coefficient),
        ("dynamic_share", dynamic_share),
    ):
        if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
            raise SimulationError(f"{name} must be a positive number, not {value!r}")
    weight_n = total_mass_kg * G_N
    return math.sqrt(2.0 * dynamic_share * weight_n / (water_density_kg_m3 * planform_area_m2 * lift_coefficient))
