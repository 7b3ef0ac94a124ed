"""Session metrics from the state labels and the rides.

Conventions
-----------
* ``duration_s`` of a session is the whole track, first fix to last fix (shore time
  included). ``water_s`` is the time in ``paddle``, ``wait`` and ``ride``.
* ``time_in_state_s`` counts analysed time only: grid steps inside gap-free pieces.
  Pauses longer than the split threshold are not given to any state, so the four times
  add up to ``duration_s`` minus ``gap_s``.
* ``rides_per_hour`` is rides per hour in the water (``water_s``); 0 when there was none.
* Distances are along the smoothed path: ``paddle_distance_m`` over ``paddle`` steps,
  ``ride_distance_m`` the sum of the rides' distances.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from sessions.states import PADDLE, STATES


@dataclass
class SessionMetrics:
    """Whole-session figures (SI units)."""

    duration_s: float
    water_s: float
    gap_s: float
    time_in_state_s: dict[str, float]
    share_in_state: dict[str, float]
    rides: int
    missed_waves: int
    rides_per_hour: float
    paddle_distance_m: float
    ride_distance_m: float
    longest_ride_s: float
    longest_ride_m: float
    peak_speed_mps: float
    median_onset_speed_mps: float | None

    def to_dict(self) -> dict:
        return asdict(self)


def session_metrics(track_duration_s: float, grid_t_s, grid_x_m, grid_y_m, grid_piece, labels, rides, missed, step_s: float,
                    piece_bounds_s=None) -> SessionMetrics:
    """Compute :class:`SessionMetrics` (see the module docstring for conventions).

    ``piece_bounds_s`` maps each piece index to the times of its first and last fix;
    each grid step then stands for the time until the next step of its piece, the first
    step also for the time since the piece's first fix, so the state times of a piece
    add up to its duration exactly.
    """
    lab = np.asarray(labels)
    t = np.asarray(grid_t_s, dtype=float)
    w = grid_weights_s(t, grid_piece, piece_bounds_s)
    sums = np.bincount(lab.astype(np.int64), weights=w, minlength=len(STATES)) if len(lab) else np.zeros(len(STATES))
    in_state = {name: float(sums[k]) for k, name in enumerate(STATES)}
    analysed = sum(in_state.values())
    share = {name: (v / analysed if analysed > 0 else 0.0) for name, v in in_state.items()}
    water = in_state["paddle"] + in_state["wait"] + in_state["ride"]
    # paddle distance: steps between consecutive grid points that are both paddle and in
    # the same piece
    x = np.asarray(grid_x_m, dtype=float)
    y = np.asarray(grid_y_m, dtype=float)
    p = np.asarray(grid_piece)
    if len(t) > 1:
        seg = np.hypot(np.diff(x), np.diff(y))
        same = (p[1:] == p[:-1]) & (lab[1:] == PADDLE) & (lab[:-1] == PADDLE)
        paddle_m = float(np.sum(seg[same]))
    else:
        paddle_m = 0.0
    ride_m = float(sum(r.distance_m for r in rides))
    onsets = [r.onset_speed_mps for r in rides if r.onset_speed_mps is not None]
    peak = float(max((r.peak_speed_mps for r in rides), default=0.0))
    return SessionMetrics(
        duration_s=float(track_duration_s),
        water_s=water,
        gap_s=max(float(track_duration_s) - analysed, 0.0),
        time_in_state_s=in_state,
        share_in_state=share,
        rides=len(rides),
        missed_waves=len(missed),
        rides_per_hour=(len(rides) / (water / 3600.0)) if water > 0 else 0.0,
        paddle_distance_m=paddle_m,
        ride_distance_m=ride_m,
        longest_ride_s=float(max((r.duration_s for r in rides), default=0.0)),
        longest_ride_m=float(max((r.distance_m for r in rides), default=0.0)),
        peak_speed_mps=peak,
        median_onset_speed_mps=float(np.median(onsets)) if onsets else None,
    )


def grid_weights_s(grid_t_s, grid_piece, piece_bounds_s=None) -> np.ndarray:
    """Time [s] each grid step stands for (see :func:`session_metrics`)."""
    t = np.asarray(grid_t_s, dtype=float)
    p = np.asarray(grid_piece)
    n = len(t)
    if n == 0:
        return np.zeros(0)
    w = np.zeros(n)
    same = p[1:] == p[:-1]
    w[:-1] = np.where(same, np.diff(t), 0.0)
    if piece_bounds_s is None:
        step = float(np.median(np.diff(t))) if n > 1 else 1.0
        last = np.concatenate((~same, [True]))
        w[last] = step
        return w
    first = np.concatenate(([True], ~same))
    last = np.concatenate((~same, [True]))
    for i in np.flatnonzero(first):
        w[i] += max(t[i] - piece_bounds_s[int(p[i])][0], 0.0)
    for i in np.flatnonzero(last):
        w[i] += max(piece_bounds_s[int(p[i])][1] - t[i], 0.0)
    return w
