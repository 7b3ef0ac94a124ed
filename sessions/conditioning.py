"""Track conditioning: raw GPS fixes to a smooth path with speed, heading and acceleration.

Pipeline (each step a function below, all in the local east/north frame of
:mod:`sessions.geodesy`):

1. :func:`split_on_gaps` cuts the track where no fix arrived for longer than
   ``split_gap_s``; every piece is smoothed on its own and nothing is interpolated
   across a cut.
2. :func:`flag_spikes` marks physically impossible jumps: a fix that lies farther from
   both neighbours than any plausible speed allows while the neighbours agree with each
   other. Flagged fixes are kept (nothing is lost) but not used as measurements.
3. :func:`kalman_smooth` runs a constant-velocity Kalman filter with a Rauch-Tung-Striebel
   backward pass over the irregular fix times. The speed reported by the device
   (Doppler speed), when present, enters as a second measurement. A fix whose innovation
   is improbably large is skipped as well (a second, statistical outlier test).

Model
-----
Per axis the state is ``(position, velocity)``; the process is white-noise acceleration
of spectral density ``accel_psd`` [m^2/s^3], discretised exactly for a step ``dt``::

    F = [[1, dt], [0, 1]],   Q = q [[dt^3/3, dt^2/2], [dt^2/2, dt]]

(Bar-Shalom, Li & Kirubarajan 2001, "Estimation with Applications to Tracking and
Navigation", Wiley, section 6.2.2, from memory). Position fixes have an isotropic
standard deviation ``pos_sd_m`` in both axes, so the east and north filters share one
covariance matrix and the loop only carries three covariance numbers per step.
A reported speed ``s`` is turned into a velocity measurement ``s * u`` along the
predicted direction of travel ``u``; its variance adds the heading uncertainty
(``s^2 * var(heading)``) so that at low speed, when the direction is unknown, the
measurement is weak. The smoother follows Rauch, Tung & Striebel 1965, AIAA J.
3(8):1445-1450.

The per-fix loop is the one loop over samples in the analysis; it uses plain Python
floats (numpy scalars are several times slower) and stays below ~0.1 s for a 4-hour
1 Hz track.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from sessions.errors import AnalysisError
from sessions.geodesy import LocalFrame
from sessions.track import COL_LAT, COL_LON, COL_SPEED, COL_TIME, Track


@dataclass(frozen=True)
class ConditioningSettings:
    """Tunables of the conditioning step (all SI)."""

    split_gap_s: float = 60.0  # no fix for longer than this: cut the track [s]
    spike_speed_mps: float = 45.0  # no surfer, walker or car on a beach road moves faster [m/s]
    pos_sd_m: float = 3.0  # standard deviation of one position fix per axis [m]
    speed_sd_mps: float = 0.25  # standard deviation of a reported (Doppler) speed [m/s]
    accel_psd: float = 0.3  # white-noise acceleration spectral density, slow motion [m^2/s^3]
    fast_accel_psd: float = 60.0  # the same for fast motion (take-off, turns) [m^2/s^3]
    fast_pos_sd_m: float = 2.0  # position standard deviation assumed in the fast pass [m]
    fast_trigger_mps: float = 1.6  # slow-pass speed above which the fast pass is run [m/s]
    fast_pad_s: float = 8.0  # the fast pass covers this much before and after [s]
    lag_window_s: float = 5.0  # window over which the slow pass's lag is judged [s]
    lag_ratio_min: float = 2.5  # lag this many times the typical scatter: motion, not noise
    gate_sigma: float = 6.0  # innovation larger than this many sigma: fix skipped
    max_gate_run: int = 5  # after this many skipped fixes in a row the filter re-locks


@dataclass
class ConditionedTrack:
    """One row per fix of the input track, in the local frame.

    Arrays (all the same length as the track): ``time`` (datetime64[ns], UTC, naive),
    ``t_s`` (seconds since the first fix), ``x_m``/``y_m`` (smoothed east/north),
    ``vx_mps``/``vy_mps``, ``speed_mps``, ``speed_sd_mps``, ``heading_deg`` (direction of
    travel, degrees clockwise from north), ``accel_mps2`` (rate of change of speed),
    ``raw_x_m``/``raw_y_m`` (fixes as measured), ``piece`` (index of the gap-free piece)
    and ``rejected`` (the fix was not used as a measurement).
    """

    frame: LocalFrame
    time: np.ndarray
    t_s: np.ndarray
    x_m: np.ndarray
    y_m: np.ndarray
    vx_mps: np.ndarray
    vy_mps: np.ndarray
    speed_mps: np.ndarray
    speed_sd_mps: np.ndarray
    heading_deg: np.ndarray
    accel_mps2: np.ndarray
    raw_x_m: np.ndarray
    raw_y_m: np.ndarray
    piece: np.ndarray
    rejected: np.ndarray
    reported_speed_mps: np.ndarray

    def __len__(self) -> int:
        return len(self.t_s)

    def to_frame(self) -> pd.DataFrame:
        """The per-fix arrays as a DataFrame (``time`` tz-aware UTC)."""
        return pd.DataFrame(
            {
                "time": pd.to_datetime(self.time).tz_localize("UTC"),
                "t_s": self.t_s,
                "x_m": self.x_m,
                "y_m": self.y_m,
                "speed_mps": self.speed_mps,
                "speed_sd_mps": self.speed_sd_mps,
                "heading_deg": self.heading_deg,
                "accel_mps2": self.accel_mps2,
                "piece": self.piece,
                "rejected": self.rejected,
            }
        )


# --- pipeline ----------------------------------------------------------------------------
def condition(track: Track, settings: ConditioningSettings | None = None) -> ConditionedTrack:
    """Smooth a track: gap split, spike flags, Kalman filter and RTS smoother per piece."""
    s = settings or ConditioningSettings()
    pts = track.points
    if len(pts) < 2:
        raise AnalysisError(f"a track needs at least two fixes to be analysed; this one has {len(pts)}")
    time = pts[COL_TIME].dt.tz_convert("UTC").dt.tz_localize(None).to_numpy(dtype="datetime64[ns]")
    t_ns = time.astype(np.int64)
    t_s = (t_ns - t_ns[0]) / 1e9
    lat = pts[COL_LAT].to_numpy(dtype=float)
    lon = pts[COL_LON].to_numpy(dtype=float)
    frame = LocalFrame.around(lat, lon)
    x, y = frame.to_local(lat, lon)
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    reported = pts[COL_SPEED].to_numpy(dtype=float) if COL_SPEED in pts else np.full(len(pts), np.nan)
    reported = np.where(np.isfinite(reported) & (reported >= 0) & (reported < s.spike_speed_mps), reported, np.nan)

    piece = split_on_gaps(t_s, s.split_gap_s)
    n = len(t_s)
    out = {k: np.empty(n) for k in ("x", "y", "vx", "vy", "vsd")}
    rejected = np.zeros(n, dtype=bool)
    bounds = np.flatnonzero(np.diff(piece)) + 1
    starts = np.concatenate(([0], bounds))
    ends = np.concatenate((bounds, [n]))
    for a, b in zip(starts, ends):
        spikes = flag_spikes(t_s[a:b], x[a:b], y[a:b], s.spike_speed_mps, s.pos_sd_m)
        ps = _for_rate(s, t_s[a:b])
        xs, ys, vxs, vys, vsd, gated = kalman_smooth(
            t_s[a:b], x[a:b], y[a:b], reported[a:b], spikes, ps
        )
        _fast_pass(t_s[a:b], x[a:b], y[a:b], reported[a:b], spikes, ps, xs, ys, vxs, vys, vsd)
        out["x"][a:b], out["y"][a:b] = xs, ys
        out["vx"][a:b], out["vy"][a:b], out["vsd"][a:b] = vxs, vys, vsd
        rejected[a:b] = spikes | gated
    speed = np.hypot(out["vx"], out["vy"])
    _fuse_reported(speed, out, reported, s)
    heading = np.degrees(np.arctan2(out["vx"], out["vy"])) % 360.0
    accel = along_track_rate(t_s, speed, piece)
    return ConditionedTrack(
        frame=frame,
        time=time,
        t_s=t_s,
        x_m=out["x"],
        y_m=out["y"],
        vx_mps=out["vx"],
        vy_mps=out["vy"],
        speed_mps=speed,
        speed_sd_mps=out["vsd"],
        heading_deg=heading,
        accel_mps2=accel,
        raw_x_m=x,
        raw_y_m=y,
        piece=piece,
        rejected=rejected,
        reported_speed_mps=reported,
    )


# --- pure functions ----------------------------------------------------------------------
def split_on_gaps(t_s: np.ndarray, split_gap_s: float) -> np.ndarray:
    """Index of the gap-free piece of every fix (a new piece after each long pause)."""
    t = np.asarray(t_s, dtype=float)
    if len(t) == 0:
        return np.zeros(0, dtype=np.int32)
    cuts = np.concatenate(([False], np.diff(t) > split_gap_s))
    return np.cumsum(cuts).astype(np.int32)


def flag_spikes(t_s, x_m, y_m, max_speed_mps: float, pos_sd_m: float, passes: int = 3,
                spike_dev_m: float = 25.0, max_accel_mps2: float = 10.0) -> np.ndarray:
    """Mark fixes that jump impossibly far off the path of their neighbours.

    A fix is a spike when either

    * it lies farther than ``max_speed_mps * dt + 4 pos_sd_m`` from both its previous
      and its next kept fix while those two are within that bound of each other (an
      impossible speed), or
    * it lies farther than ``spike_dev_m + max_accel_mps2 * dt^2 / 2`` from the point
      interpolated in time between its neighbours (an impossible sideways
      acceleration; ``dt`` the longer of the two intervals).

    Repeated ``passes`` times so that short bursts of spikes go too. The first and last
    fix are judged against the next (previous) two fixes by the speed test.
    """
    t = np.asarray(t_s, dtype=float)
    x = np.asarray(x_m, dtype=float)
    y = np.asarray(y_m, dtype=float)
    n = len(t)
    bad = np.zeros(n, dtype=bool)
    if n < 3:
        return bad
    slack = 4.0 * pos_sd_m
    for _ in range(passes):
        keep = np.flatnonzero(~bad)
        if len(keep) < 3:
            break
        tk, xk, yk = t[keep], x[keep], y[keep]

        def too_far(i, j):
            return np.hypot(xk[i] - xk[j], yk[i] - yk[j]) > max_speed_mps * np.abs(tk[i] - tk[j]) + slack

        mid = np.arange(1, len(keep) - 1)
        spike = too_far(mid, mid - 1) & too_far(mid, mid + 1) & ~too_far(mid - 1, mid + 1)
        # deviation from the neighbours' path, interpolated in time
        span = tk[mid + 1] - tk[mid - 1]
        w = np.where(span > 0, (tk[mid] - tk[mid - 1]) / np.where(span > 0, span, 1.0), 0.5)
        ix = xk[mid - 1] + w * (xk[mid + 1] - xk[mid - 1])
        iy = yk[mid - 1] + w * (yk[mid + 1] - yk[mid - 1])
        dev = np.hypot(xk[mid] - ix, yk[mid] - iy)
        dt = np.maximum(tk[mid] - tk[mid - 1], tk[mid + 1] - tk[mid])
        # a spike also drags its neighbours' interpolation off; only the local maximum
        # of the deviation is the spike
        dev_prev = np.concatenate(([0.0], dev[:-1]))
        dev_next = np.concatenate((dev[1:], [0.0]))
        spike |= (dev > spike_dev_m + 0.5 * max_accel_mps2 * dt * dt) & (dev >= dev_prev) & (dev >= dev_next)
        new = np.zeros(len(keep), dtype=bool)
        new[mid] = spike
        # end points: compare with the next two (or previous two) fixes
        if too_far(0, 1) and too_far(0, 2) and not too_far(1, 2):
            new[0] = True
        last = len(keep) - 1
        if too_far(last, last - 1) and too_far(last, last - 2) and not too_far(last - 1, last - 2):
            new[last] = True
        if not new.any():
            break
        bad[keep[new]] = True
    return bad


def _fuse_reported(speed, out, reported, s: ConditioningSettings) -> None:
    """Combine the smoothed speed with the device's speed by inverse variance (in place).

    Inside the filter a reported speed is weak wherever the direction of travel is
    uncertain (the velocity measurement is built along the predicted heading). The
    speed itself does not depend on the heading, so the two speed estimates are fused
    afterwards, ``v = (v_s / var_s + v_r / var_r) / (1 / var_s + 1 / var_r)``, and the
    velocity is rescaled to that speed. The filter's weak use of the same reading is
    ignored (a small double count).
    """
    have = np.isfinite(reported)
    if not have.any():
        return
    var_s = np.maximum(out["vsd"][have] ** 2, 1e-6)
    var_r = s.speed_sd_mps**2
    fused = (speed[have] / var_s + reported[have] / var_r) / (1.0 / var_s + 1.0 / var_r)
    scale = np.where(speed[have] > 1e-6, fused / np.maximum(speed[have], 1e-6), 1.0)
    out["vx"][have] *= scale
    out["vy"][have] *= scale
    out["vsd"][have] = np.sqrt(1.0 / (1.0 / var_s + 1.0 / var_r))
    speed[have] = np.where(speed[have] > 1e-6, fused, speed[have])


def _for_rate(s: ConditioningSettings, t_s) -> ConditioningSettings:
    """Settings with position noise inflated for fixes faster than one per second.

    GPS position errors are strongly correlated from one fix to the next (they change
    over tens of seconds), so five fixes a second carry little more information about
    the position than one. Treating them as independent would make the filter follow
    the noise; the standard deviations are scaled by ``sqrt(1 s / interval)`` so that
    the information per second stays that of a 1 Hz track (measurement decorrelation
    by variance inflation; common practice, no published source).
    """
    if len(t_s) < 2:
        return s
    dt = float(np.median(np.diff(t_s)))
    if not (dt > 0) or dt >= 1.0:
        return s
    k = math.sqrt(1.0 / dt)
    return ConditioningSettings(
        **{**s.__dict__, "pos_sd_m": s.pos_sd_m * k, "fast_pos_sd_m": s.fast_pos_sd_m * k, "speed_sd_mps": s.speed_sd_mps * k}
    )


def _fast_pass(t, x, y, rep, skip, s: ConditioningSettings, xs, ys, vxs, vys, vsd) -> None:
    """Re-smooth fast stretches with a high process noise and blend them in (in place).

    One process noise cannot serve both a drifting surfer (where it should be low, so
    GPS noise is not taken for motion) and a take-off or a turn (where the speed changes
    by metres per second within a second). Stretches where the slow pass exceeds
    ``fast_trigger_mps`` and lags behind the fixes (their mean squared distance from the
    slow path over ``lag_window_s`` is ``lag_ratio_min`` times its typical level, so the
    misfit is motion the slow model cannot follow, not noise), padded by ``fast_pad_s``,
    are smoothed again with
    ``fast_accel_psd``; the result replaces the slow one with a weight rising from 0 at
    1.5 m/s to 1 at 2.5 m/s of fast-pass speed.
    """
    n = len(t)
    # lag of the slow pass: squared distance of the fixes from the slow path, averaged
    # over a few seconds and compared with its typical (median) level over the piece
    ok = ~np.asarray(skip, dtype=bool)
    if ok.sum() < 10:
        return
    res2 = np.where(ok, (x - xs) ** 2 + (y - ys) ** 2, np.nan)
    typical = float(np.nanmedian(res2)) / (2.0 * math.log(2.0))  # per-axis variance, chi2(2) median
    lo_w = np.searchsorted(t, t - s.lag_window_s / 2, side="left")
    hi_w = np.searchsorted(t, t + s.lag_window_s / 2, side="right")
    csum = np.concatenate(([0.0], np.cumsum(np.nan_to_num(res2))))
    ccount = np.concatenate(([0], np.cumsum(ok)))
    cnt = np.maximum(ccount[hi_w] - ccount[lo_w], 1)
    lag_ratio = (csum[hi_w] - csum[lo_w]) / cnt / (2.0 * max(typical, 1e-6))
    fast = (np.hypot(vxs, vys) > s.fast_trigger_mps) & (lag_ratio > s.lag_ratio_min)
    if not fast.any():
        return
    idx = np.flatnonzero(fast)
    lo = np.searchsorted(t, t[idx] - s.fast_pad_s, side="left")
    hi = np.searchsorted(t, t[idx] + s.fast_pad_s, side="right")
    cover = np.zeros(n + 1, dtype=np.int64)
    np.add.at(cover, lo, 1)
    np.add.at(cover, hi, -1)
    inside = np.cumsum(cover[:n]) > 0
    edges = np.flatnonzero(np.diff(np.concatenate(([0], inside.astype(np.int8), [0]))))
    fs = ConditioningSettings(**{**s.__dict__, "accel_psd": s.fast_accel_psd, "pos_sd_m": s.fast_pos_sd_m})
    for a, b in zip(edges[::2], edges[1::2]):
        if b - a < 3:
            continue
        fx, fy, fvx, fvy, fsd, _ = kalman_smooth(t[a:b], x[a:b], y[a:b], rep[a:b], skip[a:b], fs)
        w = np.clip((np.hypot(fvx, fvy) - 1.5) / 1.0, 0.0, 1.0)
        xs[a:b] = w * fx + (1 - w) * xs[a:b]
        ys[a:b] = w * fy + (1 - w) * ys[a:b]
        vxs[a:b] = w * fvx + (1 - w) * vxs[a:b]
        vys[a:b] = w * fvy + (1 - w) * vys[a:b]
        vsd[a:b] = w * fsd + (1 - w) * vsd[a:b]


def kalman_smooth(t_s, x_m, y_m, reported_speed_mps, skip, s: ConditioningSettings):
    """Constant-velocity Kalman filter plus RTS smoother on one gap-free piece.

    Returns smoothed ``x, y, vx, vy``, the standard deviation of one velocity component
    (used as the speed's standard deviation) and a mask of fixes the innovation gate
    skipped. See the module docstring for the model.
    """
    # plain Python floats for the per-fix loops (tolist converts in C)
    t = np.asarray(t_s, dtype=float).tolist()
    zx = np.asarray(x_m, dtype=float).tolist()
    zy = np.asarray(y_m, dtype=float).tolist()
    zs = np.asarray(reported_speed_mps, dtype=float).tolist()
    sk = np.asarray(skip, dtype=bool).tolist()
    n = len(t)
    q = float(s.accel_psd)
    r_p = float(s.pos_sd_m) ** 2
    r_s = float(s.speed_sd_mps) ** 2
    gate2 = float(s.gate_sigma) ** 2
    max_run = int(s.max_gate_run)
    isfinite = math.isfinite

    # forward pass storage: filtered state and covariance, predicted covariance
    fx = [0.0] * n
    fy = [0.0] * n
    fvx = [0.0] * n
    fvy = [0.0] * n
    fa = [0.0] * n
    fb = [0.0] * n
    fc = [0.0] * n
    pa = [0.0] * n
    pb = [0.0] * n
    pc = [0.0] * n
    gated = [False] * n

    # initial state: first usable fix, velocity unknown
    i0 = 0
    while i0 < n - 1 and sk[i0]:
        i0 += 1
    px, py, pvx, pvy = zx[i0], zy[i0], 0.0, 0.0
    a, b, c = r_p, 0.0, 25.0  # position var, cross cov, velocity var ((5 m/s)^2)
    run = 0
    t_prev = t[0]
    for i in range(n):
        dt = t[i] - t_prev
        t_prev = t[i]
        if i > 0:
            # predict
            px += dt * pvx
            py += dt * pvy
            a = a + dt * (2.0 * b + dt * c) + q * dt * dt * dt / 3.0
            b = b + dt * c + q * dt * dt / 2.0
            c = c + q * dt
        pa[i] = a
        pb[i] = b
        pc[i] = c
        if not sk[i]:
            # position update, shared gain for both axes
            sp = a + r_p
            ix = zx[i] - px
            iy = zy[i] - py
            if (ix * ix + iy * iy) / sp > gate2 and run < max_run and i > i0:
                gated[i] = True
                run += 1
            else:
                run = 0
                k1 = a / sp
                k2 = b / sp
                px += k1 * ix
                py += k1 * iy
                pvx += k2 * ix
                pvy += k2 * iy
                c = c - b * k2
                b = b - b * k1
                a = a - a * k1
                # reported speed as a velocity measurement along the predicted heading
                v = zs[i]
                if isfinite(v):
                    sp_now = math.sqrt(pvx * pvx + pvy * pvy)
                    if sp_now > 0.05:
                        ux = pvx / sp_now
                        uy = pvy / sp_now
                        rv = r_s + v * v * c / (sp_now * sp_now)
                        sv = c + rv
                        iv_x = v * ux - pvx
                        iv_y = v * uy - pvy
                        g1 = b / sv
                        g2 = c / sv
                        px += g1 * iv_x
                        py += g1 * iv_y
                        pvx += g2 * iv_x
                        pvy += g2 * iv_y
                        a = a - b * g1
                        b = b - b * g2
                        c = c - c * g2
                    elif v < 0.3:
                        # device says nearly still: damp the velocity toward zero
                        sv = c + r_s
                        g1 = b / sv
                        g2 = c / sv
                        px -= g1 * pvx
                        py -= g1 * pvy
                        pvx -= g2 * pvx
                        pvy -= g2 * pvy
                        a = a - b * g1
                        b = b - b * g2
                        c = c - c * g2
        fx[i] = px
        fy[i] = py
        fvx[i] = pvx
        fvy[i] = pvy
        fa[i] = a
        fb[i] = b
        fc[i] = c

    # backward pass (Rauch-Tung-Striebel)
    sx = fx[:]
    sy = fy[:]
    svx = fvx[:]
    svy = fvy[:]
    sc = fc[:]
    na, nb, nc = fa[n - 1], fb[n - 1], fc[n - 1]
    for i in range(n - 2, -1, -1):
        dt = t[i + 1] - t[i]
        a, b, c = fa[i], fb[i], fc[i]
        # predicted covariance at i+1 and its inverse
        qa, qb, qc = pa[i + 1], pb[i + 1], pc[i + 1]
        det = qa * qc - qb * qb
        if det <= 0.0:
            continue
        # P_f F^T
        m11 = a + dt * b
        m12 = b
        m21 = b + dt * c
        m22 = c
        inv11 = qc / det
        inv12 = -qb / det
        inv22 = qa / det
        g11 = m11 * inv11 + m12 * inv12
        g12 = m11 * inv12 + m12 * inv22
        g21 = m21 * inv11 + m22 * inv12
        g22 = m21 * inv12 + m22 * inv22
        # state
        dxp = sx[i + 1] - (fx[i] + dt * fvx[i])
        dxv = svx[i + 1] - fvx[i]
        dyp = sy[i + 1] - (fy[i] + dt * fvy[i])
        dyv = svy[i + 1] - fvy[i]
        sx[i] = fx[i] + g11 * dxp + g12 * dxv
        svx[i] = fvx[i] + g21 * dxp + g22 * dxv
        sy[i] = fy[i] + g11 * dyp + g12 * dyv
        svy[i] = fvy[i] + g21 * dyp + g22 * dyv
        # covariance: P_s = P_f + G (P_s,next - P_pred,next) G^T
        da, db, dc = na - qa, nb - qb, nc - qc
        t11 = g11 * da + g12 * db
        t12 = g11 * db + g12 * dc
        t21 = g21 * da + g22 * db
        t22 = g21 * db + g22 * dc
        na = a + t11 * g11 + t12 * g12
        nb = b + t11 * g21 + t12 * g22
        nc = c + t21 * g21 + t22 * g22
        sc[i] = nc
    vsd = np.sqrt(np.maximum(np.asarray(sc), 0.0))
    return (
        np.asarray(sx),
        np.asarray(sy),
        np.asarray(svx),
        np.asarray(svy),
        vsd,
        np.asarray(gated, dtype=bool),
    )


def along_track_rate(t_s, speed_mps, piece) -> np.ndarray:
    """Rate of change of speed [m/s^2] by central differences within each piece."""
    t = np.asarray(t_s, dtype=float)
    v = np.asarray(speed_mps, dtype=float)
    out = np.zeros_like(v)
    p = np.asarray(piece)
    bounds = np.flatnonzero(np.diff(p)) + 1
    for a, b in zip(np.concatenate(([0], bounds)), np.concatenate((bounds, [len(v)]))):
        if b - a >= 2:
            out[a:b] = np.gradient(v[a:b], t[a:b])
    return out


def resample_uniform(cond: ConditionedTrack, step_s: float = 1.0) -> pd.DataFrame:
    """The smoothed path on a regular time grid, within each gap-free piece.

    Positions come from cubic Hermite interpolation between smoothed fixes (using the
    smoothed velocities as end slopes), speeds and their standard deviation from linear
    interpolation. Grid times are whole multiples of ``step_s`` from the first fix.
    Columns: ``t_s, x_m, y_m, vx_mps, vy_mps, speed_mps, speed_sd_mps, piece``.
    """
    t = cond.t_s
    frames = []
    bounds = np.flatnonzero(np.diff(cond.piece)) + 1
    for a, b in zip(np.concatenate(([0], bounds)), np.concatenate((bounds, [len(t)]))):
        ta, tb = t[a], t[b - 1]
        grid = np.arange(math.ceil(ta / step_s - 1e-9), math.floor(tb / step_s + 1e-9) + 1) * step_s
        if len(grid) == 0:
            continue
        tt = t[a:b]
        if len(tt) == 1:
            j = np.zeros(len(grid), dtype=int)
            u = np.zeros(len(grid))
            h = np.ones(len(grid))
        else:
            j = np.clip(np.searchsorted(tt, grid, side="right") - 1, 0, len(tt) - 2)
            h = tt[j + 1] - tt[j]
            u = np.where(h > 0, (grid - tt[j]) / np.where(h > 0, h, 1.0), 0.0)
        jn = np.minimum(j + 1, len(tt) - 1)
        h00 = 2 * u**3 - 3 * u**2 + 1
        h10 = u**3 - 2 * u**2 + u
        h01 = -2 * u**3 + 3 * u**2
        h11 = u**3 - u**2

        def herm(p, v):
            p = p[a:b]
            v = v[a:b]
            return h00 * p[j] + h10 * h * v[j] + h01 * p[jn] + h11 * h * v[jn]

        def lin(v):
            v = v[a:b]
            return (1 - u) * v[j] + u * v[jn]

        vx = lin(cond.vx_mps)
        vy = lin(cond.vy_mps)
        frames.append(
            pd.DataFrame(
                {
                    "t_s": grid,
                    "x_m": herm(cond.x_m, cond.vx_mps),
                    "y_m": herm(cond.y_m, cond.vy_mps),
                    "vx_mps": vx,
                    "vy_mps": vy,
                    "speed_mps": lin(cond.speed_mps),
                    "speed_sd_mps": lin(cond.speed_sd_mps),
                    "piece": np.full(len(grid), cond.piece[a], dtype=np.int32),
                }
            )
        )
    if not frames:
        raise AnalysisError("the track has no stretch long enough to analyse")
    return pd.concat(frames, ignore_index=True)
