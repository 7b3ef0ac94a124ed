"""What the surfer is doing at every moment: ``shore``, ``paddle``, ``wait`` or ``ride``.

A four-state hidden Markov model on a regular time grid (1 s by default), decoded with
the Viterbi algorithm (Rabiner 1989, Proc. IEEE 77(2):257-286, section III.B).

Observations per grid step
--------------------------
* smoothed speed ``v`` [m/s] (from :mod:`sessions.conditioning`);
* direction of travel relative to the shore: ``cos_shore``, the cosine of the angle
  between the velocity and the shoreward direction (+1 straight to the beach,
  -1 straight out to sea);
* cross-shore position ``d`` [m], positive seaward of the estimated water's edge.

Emissions (log-likelihoods, independent given the state)
---------------------------------------------------------
Speed: log-normal per state. The medians are seeded from published time-motion studies:
session-mean speed while surfing ~1.0 m/s and mean maximum ride speed 9.3 m/s (Farley,
Harris & Kilding 2012, J. Strength Cond. Res. 26(7):1887-1896); board speeds on waves
5-10 m/s (Paine 1974, BE thesis, Univ. of Sydney); waiting is stationary apart from
drift. The shore state is a mixture (standing, walking, riding in a vehicle).
Direction: rides head shoreward or along the shore, so the ride state penalises a
seaward heading; paddling and waiting use a uniform direction.
Position: a logistic "on land" probability across the estimated water's edge.

Transitions
-----------
Self-transition probabilities follow from mean bout durations, ``p = 1 - step / mean``:
paddling 30.1 s, stationary 37.7 s, riding 11.6 s (Mendez-Villanueva, Bishop & Hamer
2006, J. Strength Cond. Res. 20(3):477-482). Allowed changes: shore <-> paddle,
shore <-> wait, paddle <-> wait, paddle -> ride, wait -> ride (rarely), ride -> paddle,
ride -> wait, ride -> shore.

Shore geometry
--------------
:func:`estimate_shore` takes the beach to be where the track starts and ends (a session
begins and ends on land) and the sea to be where the surfer spends most time; when the
start and end are not on the beach it falls back on the direction of fast motion
(rides run shoreward).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

STATES: tuple[str, ...] = ("shore", "paddle", "wait", "ride")
SHORE, PADDLE, WAIT, RIDE = range(4)


@dataclass(frozen=True)
class StateModelSettings:
    """Tunables of the state model (SI units; durations in s, speeds in m/s)."""

    # log-normal speed emissions: median [m/s] and sigma of log(speed)
    wait_speed_median_mps: float = 0.35
    wait_speed_log_sd: float = 0.75
    paddle_speed_median_mps: float = 1.15
    paddle_speed_log_sd: float = 0.35
    ride_speed_median_mps: float = 5.0
    ride_speed_log_sd: float = 0.45
    shore_walk_median_mps: float = 1.3
    # mean bout durations (Mendez-Villanueva et al. 2006)
    paddle_mean_s: float = 30.1
    wait_mean_s: float = 37.7
    ride_mean_s: float = 11.6
    shore_mean_s: float = 300.0
    # direction: a ride heading more seaward than this cosine is unlikely
    ride_min_cos_shore: float = -0.35
    ride_cos_scale: float = 0.12
    # land/water logistic width across the water's edge [m]
    edge_scale_m: float = 8.0
    # net speed: straight-line displacement over a centred window / window length
    net_window_s: float = 16.0
    wait_net_median_mps: float = 0.22
    wait_net_log_sd: float = 0.6
    paddle_net_median_mps: float = 0.9
    paddle_net_log_sd: float = 0.35
    ride_net_median_mps: float = 3.5
    ride_net_log_sd: float = 0.7

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class ShoreGeometry:
    """Beach reference point, unit seaward direction and the water's edge offset."""

    origin_x_m: float
    origin_y_m: float
    seaward_x: float
    seaward_y: float
    edge_m: float  # cross-shore distance of the water's edge from the origin [m]
    method: str  # "start_end" or "fast_motion" or "unknown"
    beach_points: tuple[tuple[float, float], ...] = ()  # where the track starts and ends [m]
    land_radius_m: float = 0.0  # the land is within this distance of a beach point [m]

    @property
    def known(self) -> bool:
        return self.method != "unknown"

    def land_margin_m(self, x_m, y_m) -> np.ndarray:
        """How far beyond the land [m]: positive in the water, negative on land.

        With beach points (start/end method) the land is the disc of ``land_radius_m``
        around each: a surfer walks from the beach point to the water and back, while
        rides and paddling stay in the water even where they come close to the shore
        farther along the beach. Otherwise the cross-shore distance is used.
        """
        x = np.asarray(x_m, dtype=float)
        y = np.asarray(y_m, dtype=float)
        if not self.beach_points:
            return self.cross_shore_m(x, y)
        r = np.min([np.hypot(x - bx, y - by) for bx, by in self.beach_points], axis=0)
        return r - self.land_radius_m

    def cross_shore_m(self, x_m, y_m) -> np.ndarray:
        """Distance seaward of the water's edge [m] (negative on land)."""
        return (
            (np.asarray(x_m) - self.origin_x_m) * self.seaward_x
            + (np.asarray(y_m) - self.origin_y_m) * self.seaward_y
            - self.edge_m
        )

    def cos_shoreward(self, vx_mps, vy_mps) -> np.ndarray:
        """Cosine of the angle between the velocity and the shoreward direction."""
        vx = np.asarray(vx_mps, dtype=float)
        vy = np.asarray(vy_mps, dtype=float)
        sp = np.hypot(vx, vy)
        with np.errstate(invalid="ignore", divide="ignore"):
            c = -(vx * self.seaward_x + vy * self.seaward_y) / sp
        return np.where(sp > 1e-9, c, 0.0)


# --- pipeline ----------------------------------------------------------------------------
def label_states(
    speed_mps, vx_mps, vy_mps, x_m, y_m, geometry: ShoreGeometry, settings: StateModelSettings | None = None,
    step_s: float = 1.0, net_speed_mps=None,
) -> np.ndarray:
    """Most probable state sequence (indices into :data:`STATES`) on a regular grid.

    ``net_speed_mps`` (see :func:`net_speed`) adds the displacement over a longer window
    as a second speed observation; it separates slow paddling from drifting far better
    than the instantaneous speed, whose noise floor is a few tenths of a m/s.
    """
    s = settings or StateModelSettings()
    loglik = emission_loglik(speed_mps, vx_mps, vy_mps, x_m, y_m, geometry, s, net_speed_mps)
    log_a = transition_logprob(s, step_s)
    log_pi = np.log(np.array([0.55, 0.25, 0.15, 0.05]))
    return viterbi(log_pi, log_a, loglik)


# --- pure functions ----------------------------------------------------------------------
def estimate_shore(x_m, y_m, speed_mps, vx_mps, vy_mps, *, min_offset_m: float = 40.0) -> ShoreGeometry:
    """Beach point, seaward direction and water's edge from the track itself.

    Parameters
    ----------
    x_m, y_m : array_like
        Smoothed positions on the analysis grid [m].
    speed_mps, vx_mps, vy_mps : array_like
        Smoothed speed and velocity [m/s].
    min_offset_m : float
        The start/end method is used when the typical position lies at least this far
        from the start/end point.

    Notes
    -----
    Common practice, no published source: a surf session begins and ends on the beach,
    and most of its time is spent beyond the breakers (waiting) or paddling. The beach
    point is the mean of the first and last 30 s of positions; the sea is toward the
    median position. The land is taken as a disc around the start and end points whose
    radius comes from :func:`_water_edge` applied to the distance from those points
    (the same rule gives the water's edge across the shore, used for
    ``cross_shore_m``).
    """
    x = np.asarray(x_m, dtype=float)
    y = np.asarray(y_m, dtype=float)
    v = np.asarray(speed_mps, dtype=float)
    n = len(x)
    if n == 0:
        return ShoreGeometry(0.0, 0.0, 1.0, 0.0, 0.0, "unknown")
    k = max(1, min(30, n // 20))
    bx = 0.5 * (float(np.mean(x[:k])) + float(np.mean(x[-k:])))
    by = 0.5 * (float(np.mean(y[:k])) + float(np.mean(y[-k:])))
    mx, my = float(np.median(x)), float(np.median(y))
    dx, dy = mx - bx, my - by
    off = math.hypot(dx, dy)
    start_end_gap = math.hypot(float(np.mean(x[:k]) - np.mean(x[-k:])), float(np.mean(y[:k]) - np.mean(y[-k:])))
    if off >= min_offset_m and start_end_gap < 2.0 * off:
        ux, uy = dx / off, dy / off
        d = (x - bx) * ux + (y - by) * uy
        with np.errstate(invalid="ignore", divide="ignore"):
            toward = -(np.asarray(vx_mps) * ux + np.asarray(vy_mps) * uy) / np.maximum(v, 1e-9)
        edge = _water_edge(d, v, toward, off)
        points = ((float(np.mean(x[:k])), float(np.mean(y[:k]))), (float(np.mean(x[-k:])), float(np.mean(y[-k:]))))
        r = np.min([np.hypot(x - px, y - py) for px, py in points], axis=0)
        radius = _water_edge(r, v, toward, off)
        return ShoreGeometry(bx, by, ux, uy, edge, "start_end", points, radius)
    # fall back: fast motion (rides) runs shoreward
    fast = v > 3.0
    if int(fast.sum()) >= 5:
        vx = np.asarray(vx_mps, dtype=float)[fast]
        vy = np.asarray(vy_mps, dtype=float)[fast]
        sx, sy = float(np.sum(vx / v[fast])), float(np.sum(vy / v[fast]))
        norm = math.hypot(sx, sy)
        if norm >= 0.3 * int(fast.sum()):
            ux, uy = -sx / norm, -sy / norm
            d = (x - mx) * ux + (y - my) * uy
            edge = float(np.min(d)) - 20.0
            return ShoreGeometry(mx, my, ux, uy, edge, "fast_motion")
    return ShoreGeometry(mx, my, 1.0, 0.0, 0.0, "unknown")


def _water_edge(d: np.ndarray, v: np.ndarray, toward_shore: np.ndarray, offset_m: float) -> float:
    """Distance of the water's edge from the beach point [m] along a measure ``d``.

    Common practice, no published source: rides finish in the water, so the edge lies
    landward of the shallowest point reached at riding speed (``v > 3 m/s`` heading
    shoreward); the walk from the start point to the water is taken as half that
    distance, and at most a quarter of the distance to the typical (waiting) position.
    Without fast motion the edge is put at a fifth of that distance.
    """
    fast = (v > 3.0) & (toward_shore > 0.3)
    if int(fast.sum()) >= 3:
        shallowest = float(np.percentile(d[fast], 1.0))
        edge = 0.5 * shallowest
    else:
        edge = 0.2 * offset_m
    return float(min(max(edge, 0.0), 0.25 * offset_m))


def emission_loglik(speed_mps, vx_mps, vy_mps, x_m, y_m, geometry: ShoreGeometry, s: StateModelSettings,
                    net_speed_mps=None) -> np.ndarray:
    """Log-likelihood of each grid step's observations under each state, shape (n, 4).

    The shore state is a mixture of standing, walking and riding in a vehicle; with a
    net speed the mixture is over the joint likelihood of both speeds (one component
    explains both).
    """
    v = np.maximum(np.asarray(speed_mps, dtype=float), 0.02)
    n = len(v)
    out = np.empty((n, 4))
    speed_ll = _speed_components(v, s, net=False)
    if net_speed_mps is not None:
        u = np.maximum(np.asarray(net_speed_mps, dtype=float), 0.02)
        net_ll = _speed_components(u, s, net=True)
        speed_ll = {key: speed_ll[key] + net_ll[key] for key in speed_ll}
    out[:, WAIT] = speed_ll["wait"]
    out[:, PADDLE] = speed_ll["paddle"]
    out[:, RIDE] = speed_ll["ride"]
    out[:, SHORE] = np.logaddexp(
        np.logaddexp(math.log(0.5) + speed_ll["stand"], math.log(0.4) + speed_ll["walk"]),
        math.log(0.1) + speed_ll["vehicle"],
    )

    if geometry.known:
        c = geometry.cos_shoreward(vx_mps, vy_mps)
        # ride: logistic preference for shoreward/alongshore headings, normalised on [-1, 1]
        z = (c - s.ride_min_cos_shore) / s.ride_cos_scale
        log_sig = -np.logaddexp(0.0, -z)
        grid = np.linspace(-1.0, 1.0, 401)
        zz = (grid - s.ride_min_cos_shore) / s.ride_cos_scale
        norm = math.log(float(np.trapezoid(1.0 / (1.0 + np.exp(-zz)), grid)))
        # at low speed the direction is noise: blend toward uniform
        w = np.clip((v - 1.0) / 2.0, 0.0, 1.0)
        out[:, RIDE] += np.logaddexp(np.log(np.maximum(w, 1e-12)) + log_sig - norm, np.log(np.maximum(1 - w, 1e-12)) + math.log(0.5))
        for k in (SHORE, PADDLE, WAIT):
            out[:, k] += math.log(0.5)
        d = geometry.land_margin_m(x_m, y_m)
        zl = d / s.edge_scale_m
        log_land = -np.logaddexp(0.0, zl)  # log sigmoid(-d/scale)
        log_water = -np.logaddexp(0.0, -zl)
        out[:, SHORE] += log_land
        for k in (PADDLE, WAIT, RIDE):
            out[:, k] += log_water
    return out


def _speed_components(v: np.ndarray, s: StateModelSettings, net: bool) -> dict[str, np.ndarray]:
    """Log-densities of log-speed per state and per shore component."""
    lv = np.log(v)

    def lognorm(median, sd):
        z = (lv - math.log(median)) / sd
        return -0.5 * z * z - math.log(sd * math.sqrt(2 * math.pi))

    if net:
        wait = lognorm(s.wait_net_median_mps, s.wait_net_log_sd)
        paddle = lognorm(s.paddle_net_median_mps, s.paddle_net_log_sd)
        ride = lognorm(s.ride_net_median_mps, s.ride_net_log_sd)
    else:
        wait = lognorm(s.wait_speed_median_mps, s.wait_speed_log_sd)
        paddle = lognorm(s.paddle_speed_median_mps, s.paddle_speed_log_sd)
        ride = lognorm(s.ride_speed_median_mps, s.ride_speed_log_sd)
    walk = lognorm(s.shore_walk_median_mps, 0.35)
    vehicle = np.where((v > 2.0) & (v < 45.0), -math.log(math.log(45.0 / 2.0)), -30.0)
    return {"wait": wait, "paddle": paddle, "ride": ride, "stand": wait, "walk": walk, "vehicle": vehicle}


def net_speed(t_s, x_m, y_m, piece, window_s: float) -> np.ndarray:
    """Straight-line displacement over a centred window divided by its duration [m/s].

    The window is cut at the ends of each gap-free ``piece``. The correlated part of
    GPS error changes slowly, so over tens of seconds it adds far less apparent speed
    than it does from fix to fix.
    """
    t = np.asarray(t_s, dtype=float)
    x = np.asarray(x_m, dtype=float)
    y = np.asarray(y_m, dtype=float)
    p = np.asarray(piece)
    n = len(t)
    out = np.zeros(n)
    if n < 2:
        return out
    half = 0.5 * window_s
    bounds = np.flatnonzero(np.diff(p)) + 1
    for a, b in zip(np.concatenate(([0], bounds)), np.concatenate((bounds, [n]))):
        tt = t[a:b]
        j0 = np.searchsorted(tt, tt - half, side="left")
        j1 = np.searchsorted(tt, tt + half, side="right") - 1
        dt = tt[j1] - tt[j0]
        d = np.hypot(x[a:b][j1] - x[a:b][j0], y[a:b][j1] - y[a:b][j0])
        out[a:b] = np.where(dt > 0, d / np.where(dt > 0, dt, 1.0), 0.0)
    return out


def transition_logprob(s: StateModelSettings, step_s: float = 1.0) -> np.ndarray:
    """Log transition matrix (4 x 4, rows = from) for grid step ``step_s``."""
    def stay(mean_s):
        return max(1.0 - step_s / max(mean_s, step_s * 1.01), 1e-6)

    a = np.zeros((4, 4))
    # leaving probabilities split over allowed destinations
    leave = {
        SHORE: {PADDLE: 0.7, WAIT: 0.3},
        PADDLE: {WAIT: 0.55, RIDE: 0.4, SHORE: 0.05},
        WAIT: {PADDLE: 0.9, RIDE: 0.08, SHORE: 0.02},
        RIDE: {PADDLE: 0.6, WAIT: 0.3, SHORE: 0.1},
    }
    means = {SHORE: s.shore_mean_s, PADDLE: s.paddle_mean_s, WAIT: s.wait_mean_s, RIDE: s.ride_mean_s}
    for i in range(4):
        p = stay(means[i])
        a[i, i] = p
        for j, share in leave[i].items():
            a[i, j] = (1.0 - p) * share
    with np.errstate(divide="ignore"):
        return np.log(a)


def viterbi(log_pi: np.ndarray, log_a: np.ndarray, loglik: np.ndarray) -> np.ndarray:
    """Most probable state path of an HMM (Rabiner 1989, eqs. 32a-35).

    Parameters
    ----------
    log_pi : (k,) initial log-probabilities
    log_a : (k, k) log transition matrix, rows = from
    loglik : (n, k) log emission likelihoods

    Returns
    -------
    (n,) int array of state indices.

    Notes
    -----
    The recursion over time runs in plain Python floats. For the given sparsity pattern
    of the transition matrix, the inner maximisation is unrolled into straight-line code
    (generated once per pattern and cached), which is several times faster than numpy
    per step on a model this small.
    """
    n, k = loglik.shape
    if n == 0:
        return np.zeros(0, dtype=np.int8)
    allowed = tuple(tuple(i for i in range(k) if log_a[i, j] > -math.inf) for j in range(k))
    step = _viterbi_kernel(k, allowed)
    la = {(i, j): float(log_a[i, j]) for j in range(k) for i in allowed[j]}
    delta = [float(log_pi[j]) + float(loglik[0, j]) for j in range(k)]
    back, last = step(loglik.tolist(), delta, la)
    path = np.empty(n, dtype=np.int8)
    j = max(range(k), key=lambda m: last[m])
    path[n - 1] = j
    for t in range(n - 1, 0, -1):
        j = back[t - 1][j]
        path[t - 1] = j
    return path


_KERNELS: dict = {}


def _viterbi_kernel(k: int, allowed: tuple):
    """Generate (once) the unrolled forward recursion for one transition pattern."""
    key = (k, allowed)
    if key in _KERNELS:
        return _KERNELS[key]
    lines = ["def kernel(rows, delta, la):"]
    lines += [f"    a_{i}_{j} = la[({i}, {j})]" for j in range(k) for i in allowed[j]]
    lines.append("    " + ", ".join(f"d{j}" for j in range(k)) + " = delta" + ("" if k > 1 else "[0]"))
    lines.append("    back = []")
    lines.append("    append = back.append")
    lines.append("    for row in rows[1:]:")
    for j in range(k):
        preds = allowed[j]
        if not preds:
            lines.append(f"        n{j} = -inf; b{j} = 0")
            continue
        i0 = preds[0]
        lines.append(f"        n{j} = d{i0} + a_{i0}_{j}; b{j} = {i0}")
        for i in preds[1:]:
            lines.append(f"        v = d{i} + a_{i}_{j}")
            lines.append(f"        if v > n{j}: n{j} = v; b{j} = {i}")
    lines.append("        append((" + ", ".join(f"b{j}" for j in range(k)) + ",))")
    lines.append("        " + ", ".join(f"d{j}" for j in range(k)) + " = " + ", ".join(f"n{j} + row[{j}]" for j in range(k)))
    lines.append("    return back, [" + ", ".join(f"d{j}" for j in range(k)) + "]")
    namespace = {"inf": math.inf}
    exec(compile("\n".join(lines), f"<viterbi kernel {k}>", "exec"), namespace)  # noqa: S102 - generated locally
    _KERNELS[key] = namespace["kernel"]
    return namespace["kernel"]


def runs(labels: np.ndarray) -> list[tuple[int, int, int]]:
    """Run-length encoding: ``(value, first_index, last_index_exclusive)`` per run."""
    lab = np.asarray(labels)
    if len(lab) == 0:
        return []
    change = np.flatnonzero(np.diff(lab)) + 1
    starts = np.concatenate(([0], change))
    ends = np.concatenate((change, [len(lab)]))
    return [(int(lab[a]), int(a), int(b)) for a, b in zip(starts, ends)]
