"""Rides and missed waves from the state labels.

A ride is a run of ``ride`` labels on the analysis grid that passes plausibility checks
(duration, peak speed, direction). For each ride:

* **catch start**: the moment the surfer began paddling into the wave: the last speed
  minimum before the ride within ``catch_max_s``;
* **start**: the planing onset from :mod:`sessions.onset` when that estimator finds one;
  otherwise the take-off: the first grid step between the catch start and the end of
  the take-off after which the speed rises by at least ``takeoff_accel_mps2`` over one
  grid step (planing acceleration is several times the catch's), or failing that the
  first riding grid step;
* **end**: speed back to paddling pace after the last riding grid step (kick-out or
  fall);
* duration, distance (integral of the smoothed speed), peak and mean speed.

A missed wave is a burst of fast shoreward paddling that does not turn into a ride.

Plausibility bounds (common practice, and the published figures in the state model):
rides last 1-44 s in competition (Mendez-Villanueva et al. 2006) and peak at 5-12.5 m/s
(Farley et al. 2012); a "ride" longer than ``max_ride_s`` or faster than
``max_ride_speed_mps`` is land travel (walking, cycling, driving), not surfing.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from sessions.states import PADDLE, RIDE, SHORE, WAIT, runs


@dataclass(frozen=True)
class RideSettings:
    """Tunables of ride extraction (SI)."""

    min_ride_s: float = 3.0  # shorter ride runs are noise [s]
    max_ride_s: float = 75.0  # longer "rides" are land travel [s]
    max_takeoff_spread_m: float = 300.0  # take-offs farther apart than this: land travel [m]
    min_peak_speed_mps: float = 2.5  # a ride must reach this speed [m/s]
    max_ride_speed_mps: float = 16.0  # faster is a vehicle or a GPS fault [m/s]
    max_seaward_cos: float = -0.5  # mean heading more seaward than this: not a ride
    min_lead_s: float = 3.0  # a ride needs this much paddling or waiting right before it [s]
    merge_gap_s: float = 2.0  # ride runs separated by at most this are one ride [s]
    catch_max_s: float = 15.0  # catch start searched this far before the ride [s]
    takeoff_peak_share: float = 0.85  # take-off ends when the speed first reaches this share of the peak
    takeoff_accel_mps2: float = 1.0  # without an onset: the ride starts at the first such rise [m/s^2]
    end_speed_mps: float = 2.0  # the ride ends when the speed is back down to this [m/s]
    end_max_extra_s: float = 4.0  # searched at most this far after the last riding step [s]
    catch_speed_mps: float = 1.6  # the catch starts after the last step at or below this [m/s]
    missed_move_mps: float = 0.5  # a burst moves at least this fast [m/s]
    missed_min_speed_mps: float = 0.85  # and reaches this smoothed speed [m/s]
    missed_min_cos: float = 0.5  # heading toward shore at least this much (cosine)
    missed_min_s: float = 4.0  # lasting at least [s]
    missed_max_s: float = 20.0  # and at most this long (longer: paddling in) [s]
    missed_from_mps: float = 0.6  # starting from this speed or slower [m/s]
    missed_clear_s: float = 10.0  # and not within this of a ride [s]
    use_onset: bool = True  # call the planing-onset estimator when it is installed
    onset_lead_s: float = 0.0  # the onset window opens this long before the catch start [s]

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class Ride:
    """One ride; times in seconds since the first fix of the track (``t_s`` base)."""

    index: int
    catch_start_s: float
    start_s: float
    end_s: float
    first_ride_s: float  # first grid step labelled ``ride``
    peak_s: float  # end of the take-off: first fix at takeoff_peak_share of the peak speed
    duration_s: float
    distance_m: float
    peak_speed_mps: float
    mean_speed_mps: float
    onset_time_s: float | None = None
    onset_speed_mps: float | None = None
    onset_ci_mps: tuple[float, float] | None = None
    onset_time_ci_s: tuple[float, float] | None = None
    onset_reason: str | None = None


# --- pipeline ----------------------------------------------------------------------------
def clean_ride_labels(labels: np.ndarray, grid_t_s, speed_mps, cos_shore, s: RideSettings) -> np.ndarray:
    """Merge ride runs split by short gaps and relabel implausible ride runs.

    An implausible run becomes ``shore`` when it is too long or too fast (land travel),
    otherwise ``paddle``.
    """
    lab = np.asarray(labels).copy()
    t = np.asarray(grid_t_s, dtype=float)
    v = np.asarray(speed_mps, dtype=float)
    c = np.asarray(cos_shore, dtype=float)
    step = float(np.median(np.diff(t))) if len(t) > 1 else 1.0
    # merge: a short non-ride run between two rides (on a continuous grid) becomes ride
    rr = runs(lab)
    for k in range(1, len(rr) - 1):
        val, a, b = rr[k]
        if val != RIDE and rr[k - 1][0] == RIDE and rr[k + 1][0] == RIDE and val != SHORE:
            if (b - a) * step <= s.merge_gap_s and t[b] - t[a - 1] <= (b - a + 1) * step + 1e-6:
                lab[a:b] = RIDE
    for val, a, b in runs(lab):
        if val != RIDE:
            continue
        dur = t[b - 1] - t[a] + step
        peak = float(np.max(v[a:b]))
        if dur > s.max_ride_s or peak > s.max_ride_speed_mps:
            lab[a:b] = SHORE
        elif dur < s.min_ride_s or peak < s.min_peak_speed_mps or float(np.mean(c[a:b])) < s.max_seaward_cos:
            lab[a:b] = PADDLE
    return lab


def require_water_context(labels, grid_t_s, speed_mps, s: RideSettings) -> np.ndarray:
    """Relabel rides that do not start from the water or that run into land travel.

    A ride needs at least ``min_lead_s`` of paddling or waiting right before it on a
    continuous grid (the catch): otherwise it becomes ``shore`` after land or ``paddle``.
    A ride followed directly by ``shore`` moving faster than ``min_peak_speed_mps``
    (median of the next 10 s) is part of land travel and becomes ``shore``.
    """
    lab = np.asarray(labels).copy()
    t = np.asarray(grid_t_s, dtype=float)
    v = np.asarray(speed_mps, dtype=float)
    step = float(np.median(np.diff(t))) if len(t) > 1 else 1.0
    # a ride must start from the water: at least ``min_lead_s`` of paddling or waiting
    # just before it on a continuous grid (the catch), not from land or a gap; and a
    # ride that runs straight into fast land travel is part of it
    rr = runs(lab)
    for k, (val, a, b) in enumerate(rr):
        if val != RIDE:
            continue
        lead = 0.0
        j = a - 1
        while j >= 0 and lab[j] in (PADDLE, WAIT) and t[j + 1] - t[j] <= 1.5 * step and lead < s.min_lead_s:
            lead += t[j + 1] - t[j]
            j -= 1
        if lead < s.min_lead_s:
            lab[a:b] = SHORE if (k > 0 and rr[k - 1][0] == SHORE) else PADDLE
            continue
        if k + 1 < len(rr) and rr[k + 1][0] == SHORE and t[rr[k + 1][1]] - t[b - 1] <= 1.5 * step:
            n0, n1 = rr[k + 1][1], rr[k + 1][2]
            after = v[n0 : min(n1, n0 + int(round(10.0 / step)))]
            if len(after) and float(np.median(after)) > s.min_peak_speed_mps:
                lab[a:b] = SHORE
    return lab


def reject_scattered_rides(labels, grid_x_m, grid_y_m, s: RideSettings) -> np.ndarray:
    """Relabel as ``shore`` all rides of a track whose take-offs are scattered.

    Surfers take off where the waves break and paddle back there after each ride, so
    the take-off points of a session cluster within a few hundred metres (common
    practice, no published source). Speed bursts on a walk, a bicycle or in a car
    start anywhere along the way. The spread is the median distance of the take-offs
    from their median point; with fewer than three rides, the distance of each
    take-off from the median position of the waiting time is used instead.
    """
    lab = np.asarray(labels).copy()
    x = np.asarray(grid_x_m, dtype=float)
    y = np.asarray(grid_y_m, dtype=float)
    ride_runs = [(a, b) for val, a, b in runs(lab) if val == RIDE]
    if not ride_runs:
        return lab
    tx = np.array([x[a] for a, _ in ride_runs])
    ty = np.array([y[a] for a, _ in ride_runs])
    if len(ride_runs) >= 3:
        cx, cy = float(np.median(tx)), float(np.median(ty))
        spread = float(np.median(np.hypot(tx - cx, ty - cy)))
        if spread > s.max_takeoff_spread_m:
            for a, b in ride_runs:
                lab[a:b] = SHORE
        return lab
    waiting = lab == WAIT
    if not waiting.any():
        for a, b in ride_runs:
            lab[a:b] = SHORE
        return lab
    cx, cy = float(np.median(x[waiting])), float(np.median(y[waiting]))
    for (a, b), px, py in zip(ride_runs, tx, ty):
        if np.hypot(px - cx, py - cy) > s.max_takeoff_spread_m:
            lab[a:b] = SHORE
    return lab


def extract_rides(labels, grid_t_s, grid_speed_mps, cond, s: RideSettings, seed: int = 0) -> list[Ride]:
    """Rides from cleaned labels; per-fix quantities come from the conditioned track."""
    lab = np.asarray(labels)
    gt = np.asarray(grid_t_s, dtype=float)
    gv = np.asarray(grid_speed_mps, dtype=float)
    step = float(np.median(np.diff(gt))) if len(gt) > 1 else 1.0
    t = cond.t_s
    v = cond.speed_mps
    rides: list[Ride] = []
    for val, a, b in runs(lab):
        if val != RIDE:
            continue
        first = float(gt[a])
        end = ride_end(gt, gv, lab, b, s.end_speed_mps, s.end_max_extra_s, step)
        catch = catch_start(gt, gv, lab, a, s.catch_max_s, step, s.catch_speed_mps)
        # per-fix samples of the ride
        i0, i1 = np.searchsorted(t, [first, end + 1e-9], side="left")
        i1 = max(i1, i0 + 1)
        seg_t = t[i0:i1]
        seg_v = v[i0:i1]
        if len(seg_v):
            j = int(np.argmax(seg_v))
            peak_speed = float(seg_v[j])
            # the take-off ends at the first fix within reach of the peak (turns make
            # the ride's speed rise and fall again later)
            k = int(np.flatnonzero(seg_v >= s.takeoff_peak_share * peak_speed)[0])
            peak_s = float(seg_t[k])
        else:
            g = a + int(np.argmax(gv[a:b]))
            peak_speed, peak_s = float(gv[g]), float(gt[g])
        ride = Ride(
            index=len(rides),
            catch_start_s=catch,
            start_s=first,
            end_s=end,
            first_ride_s=first,
            peak_s=peak_s,
            duration_s=0.0,
            distance_m=0.0,
            peak_speed_mps=peak_speed,
            mean_speed_mps=0.0,
        )
        ride.start_s = takeoff_by_acceleration(gt, gv, catch, peak_s, first, s.takeoff_accel_mps2)
        if s.use_onset:
            _apply_onset(ride, cond, seed + len(rides), s.onset_lead_s)
        ride.duration_s = max(end - ride.start_s, 0.0)
        ride.distance_m = distance_by_speed_m(t, v, ride.start_s, end)
        ride.mean_speed_mps = ride.distance_m / ride.duration_s if ride.duration_s > 0 else float(peak_speed)
        rides.append(ride)
    return rides


def _apply_onset(ride: Ride, cond, seed: int, lead_s: float = 0.0) -> None:
    """Fill the onset fields and move the ride start to the onset when one is found."""
    try:
        from sessions.onset import LEAD_BEFORE_WINDOW_CHORD_S, MARGIN_AFTER_PEAK_CHORD_S, MARGIN_AFTER_PEAK_S, estimate_onset
    except ImportError:
        return
    lo, hi = ride.catch_start_s - lead_s, max(ride.peak_s, ride.first_ride_s)
    if hi <= lo:
        ride.onset_reason = "window: the peak comes before the catch start"
        return
    # the estimator also uses data up to its margins after the window's end
    i0, i1 = np.searchsorted(
        cond.t_s, [lo - max(2.0, LEAD_BEFORE_WINDOW_CHORD_S + 1.0), hi + max(MARGIN_AFTER_PEAK_S, MARGIN_AFTER_PEAK_CHORD_S) + 1.0]
    )
    rep = cond.reported_speed_mps[i0:i1]
    est = estimate_onset(
        cond.t_s[i0:i1],
        cond.speed_mps[i0:i1],
        speed_sd_mps=cond.speed_sd_mps[i0:i1],
        reported_speed_mps=rep if np.isfinite(rep).any() else None,
        window=(lo, hi),
        seed=seed,
        # the onset is fitted to the fixes themselves: the smoothed speed's lag and blur
        # depend on the speed and would pull onsets toward the middle
        fix_xy_m=(
            np.where(cond.rejected[i0:i1], np.nan, cond.raw_x_m[i0:i1]),
            np.where(cond.rejected[i0:i1], np.nan, cond.raw_y_m[i0:i1]),
        ),
        track_xy_m=(cond.x_m[i0:i1], cond.y_m[i0:i1]),
    )
    ride.onset_reason = est.reason
    if est.speed_mps is None or est.time_s is None:
        return
    ride.onset_time_s = float(est.time_s)
    ride.onset_speed_mps = float(est.speed_mps)
    ride.onset_ci_mps = None if est.ci_mps is None else (float(est.ci_mps[0]), float(est.ci_mps[1]))
    ride.onset_time_ci_s = None if est.time_ci_s is None else (float(est.time_ci_s[0]), float(est.time_ci_s[1]))
    if lo <= ride.onset_time_s < ride.end_s:
        ride.start_s = ride.onset_time_s


def find_missed_waves(labels, grid_t_s, speed_mps, cos_shore, s: RideSettings, x_m=None, y_m=None, seaward=None) -> list[tuple[float, float]]:
    """Short bursts of shoreward paddling that did not become a ride: ``(start_s, end_s)``.

    A burst is a run of grid steps in the water heading shoreward (cosine at least
    ``missed_min_cos``) at ``missed_move_mps`` or more, that lasts ``missed_min_s`` to
    ``missed_max_s`` (longer runs are paddling in), reaches ``missed_min_speed_mps``,
    starts from near standstill (``missed_from_mps`` within the 6 s before) and lies at
    least ``missed_clear_s`` from any ride. Common practice, no published source: a
    surfer sitting in the line-up turns and sprints for a wave for a few seconds.
    """
    lab = np.asarray(labels)
    t = np.asarray(grid_t_s, dtype=float)
    v = np.asarray(speed_mps, dtype=float)
    c = np.asarray(cos_shore, dtype=float)
    step = float(np.median(np.diff(t))) if len(t) > 1 else 1.0
    moving = (lab != RIDE) & (lab != SHORE) & (v >= s.missed_move_mps) & (c >= s.missed_min_cos)
    ride_t = t[lab == RIDE]
    out = []
    for val, a, b in runs(moving.astype(np.int8)):
        if val != 1:
            continue
        dur = t[b - 1] - t[a] + step
        if dur < s.missed_min_s or dur > s.missed_max_s or float(np.max(v[a:b])) < s.missed_min_speed_mps:
            continue
        if np.any(np.diff(t[a:b]) > 1.5 * step):
            continue
        before = (t >= t[a] - 6.0) & (t < t[a])
        if not before.any() or float(np.min(v[before])) > s.missed_from_mps:
            continue
        if len(ride_t):
            near = np.searchsorted(ride_t, [t[a] - s.missed_clear_s, t[b - 1] + s.missed_clear_s])
            if near[1] > near[0]:
                continue
        out.append((float(t[a]), float(t[b - 1])))
    return out


# --- pure functions ----------------------------------------------------------------------
def catch_start(gt, gv, lab, a: int, catch_max_s: float, step: float, catch_speed_mps: float = 1.6) -> float:
    """Start of the paddle into a wave, searched back from grid index ``a``.

    The catch is the stretch where the wave already carries the board but it does not
    plane yet: the speed climbs from sprint-paddling pace toward the planing onset.
    Searching back at most ``catch_max_s`` over water states (paddle/wait) on a
    continuous grid, the catch starts at the last step whose speed is at or below
    ``catch_speed_mps`` (a hard sprint-paddling pace); if none is found, at the slowest
    step of that stretch. Common practice, no published source.
    """
    lo = a
    while lo > 0 and gt[a] - gt[lo - 1] <= catch_max_s and lab[lo - 1] in (PADDLE, WAIT) and gt[lo] - gt[lo - 1] <= 1.5 * step:
        lo -= 1
    if lo == a:
        return float(gt[a])
    seg = gv[lo:a]
    slow = np.flatnonzero(seg <= catch_speed_mps)
    if len(slow):
        return float(gt[lo + slow[-1]])
    return float(gt[lo + int(np.argmin(seg))])


def ride_end(gt, gv, lab, b: int, end_speed_mps: float, max_extra_s: float, step: float) -> float:
    """End of a ride whose last riding grid step is ``b - 1``.

    The state model hands over to paddling while the board is still slowing down; the
    ride is taken to end at the first following step at or below ``end_speed_mps``
    (back to paddling pace), searched at most ``max_extra_s`` on a continuous grid over
    water states; otherwise at the last riding step.
    """
    t = np.asarray(gt, dtype=float)
    end = float(t[b - 1])
    j = b
    while j < len(t) and t[j] - t[b - 1] <= max_extra_s and t[j] - t[j - 1] <= 1.5 * step and lab[j] in (PADDLE, WAIT):
        if gv[j] <= end_speed_mps:
            return float(t[j])
        j += 1
    return end


def takeoff_by_acceleration(gt, gv, lo_s: float, hi_s: float, default_s: float, accel_mps2: float) -> float:
    """First grid time in ``[lo_s, hi_s)`` after which the speed rises at ``accel_mps2`` or more.

    Common practice, no published source: a board in displacement mode gains speed at a
    few tenths of a m/s^2 while the wave lifts it; once it planes the acceleration
    jumps to metres per second squared. Returns ``default_s`` when no step qualifies.
    """
    t = np.asarray(gt, dtype=float)
    v = np.asarray(gv, dtype=float)
    i0, i1 = np.searchsorted(t, [lo_s - 1e-9, hi_s - 1e-9])
    if i1 - i0 < 1 or i1 >= len(t):
        return float(default_s)
    dt = t[i0 + 1 : i1 + 1] - t[i0:i1]
    rate = (v[i0 + 1 : i1 + 1] - v[i0:i1]) / np.where(dt > 0, dt, np.inf)
    hit = np.flatnonzero(rate >= accel_mps2)
    return float(t[i0 + hit[0]]) if len(hit) else float(default_s)


def distance_by_speed_m(t_s, speed_mps, start_s: float, end_s: float) -> float:
    """Distance [m] covered between two instants: trapezoidal integral of the speed.

    The smoothed speed (fused with the device's speed when present) is the best
    estimated quantity of a ride; the length of the smoothed path would shrink in turns
    and where the path is smoothed more than the speed.
    """
    t = np.asarray(t_s, dtype=float)
    v = np.asarray(speed_mps, dtype=float)
    if end_s <= start_s or len(t) < 2:
        return 0.0
    inner = (t > start_s) & (t < end_s)
    tt = np.concatenate(([start_s], t[inner], [end_s]))
    vv = np.concatenate(([np.interp(start_s, t, v)], v[inner], [np.interp(end_s, t, v)]))
    return float(np.sum(0.5 * (vv[1:] + vv[:-1]) * np.diff(tt)))


def path_length_m(x_m, y_m) -> float:
    """Length of a polyline [m]."""
    x = np.asarray(x_m, dtype=float)
    y = np.asarray(y_m, dtype=float)
    if len(x) < 2:
        return 0.0
    return float(np.sum(np.hypot(np.diff(x), np.diff(y))))
