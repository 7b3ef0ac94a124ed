"""Track conditioning: gap split, spike flags, Kalman/RTS smoother, regular grid.

The smoother is checked against an independent dense-matrix implementation of the
textbook Kalman filter and Rauch-Tung-Striebel smoother (Rauch, Tung & Striebel 1965,
AIAA J. 3(8):1445-1450; Bar-Shalom, Li & Kirubarajan 2001, sections 5.2 and 8.6), written
here with numpy matrices rather than the module's unrolled scalar recursion.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from sessions.conditioning import (
    ConditioningSettings,
    condition,
    flag_spikes,
    kalman_smooth,
    resample_uniform,
    split_on_gaps,
)
from sessions.errors import AnalysisError
from sessions.geodesy import LocalFrame
from sessions.track import Track, TrackMeta


def _track_from_xy(t_s, x_m, y_m, speed_mps=None, lat0=-33.91, lon0=151.26) -> Track:
    """Track whose fixes sit at local east/north offsets (inverse of the local frame)."""
    # small offsets: invert the tangent plane with the local radii of curvature and one
    # Newton correction against the forward transform
    frame = LocalFrame(lat0, lon0)
    lat = lat0 + np.asarray(y_m) / 110_900.0
    lon = lon0 + np.asarray(x_m) / (111_320.0 * np.cos(np.radians(lat0)))
    for _ in range(3):
        e, n = frame.to_local(lat, lon)
        lat = lat + (np.asarray(y_m) - n) / 110_900.0
        lon = lon + (np.asarray(x_m) - e) / (111_320.0 * np.cos(np.radians(lat0)))
    n = len(t_s)
    pts = pd.DataFrame(
        {
            "time": pd.Timestamp("2026-03-14T06:30:00Z") + pd.to_timedelta(np.asarray(t_s), unit="s"),
            "lat": lat,
            "lon": lon,
            "ele_m": np.full(n, np.nan),
            "speed_mps": np.full(n, np.nan) if speed_mps is None else np.asarray(speed_mps, dtype=float),
            "segment": np.zeros(n, dtype=np.int32),
        }
    )
    return Track(pts, TrackMeta(source="synthetic.gpx", sha256="0" * 64))


def test_split_on_gaps():
    t = np.array([0, 1, 2, 70, 71, 72, 200, 201.0])
    assert split_on_gaps(t, 60.0).tolist() == [0, 0, 0, 1, 1, 1, 2, 2]
    assert split_on_gaps(t, 1000.0).tolist() == [0] * 8


def test_flag_spikes_finds_single_jumps_and_spares_fast_travel():
    rng = np.random.default_rng(4)
    t = np.arange(300.0)
    x = 1.0 * t + rng.normal(0, 2, t.size)
    y = rng.normal(0, 2, t.size)
    x[100] += 150.0
    y[200] -= 90.0
    bad = flag_spikes(t, x, y, 45.0, 3.0)
    assert np.flatnonzero(bad).tolist() == [100, 200]
    # a car at 30 m/s is fast but consistent: nothing flagged
    bad_car = flag_spikes(t, 30.0 * t + rng.normal(0, 2, t.size), y * 0, 45.0, 3.0)
    assert not bad_car.any()


def _reference_rts(t, zx, zy, q, r, p0_vel):
    """Dense-matrix Kalman filter + RTS smoother, constant-velocity model, 4 states."""
    n = len(t)
    h = np.array([[1.0, 0, 0, 0], [0, 1.0, 0, 0]])  # state (x, y, vx, vy)
    x = np.array([zx[0], zy[0], 0.0, 0.0])
    p = np.diag([r, r, p0_vel, p0_vel])
    xf, pf, xp, pp, fs = [], [], [], [], []
    for i in range(n):
        dt = t[i] - t[i - 1] if i else 0.0
        f = np.eye(4)
        f[0, 2] = f[1, 3] = dt
        qq = q * np.array([[dt**3 / 3, 0, dt**2 / 2, 0], [0, dt**3 / 3, 0, dt**2 / 2], [dt**2 / 2, 0, dt, 0], [0, dt**2 / 2, 0, dt]])
        if i:
            x = f @ x
            p = f @ p @ f.T + qq
        xp.append(x.copy())
        pp.append(p.copy())
        fs.append(f)
        s = h @ p @ h.T + r * np.eye(2)
        k = p @ h.T @ np.linalg.inv(s)
        x = x + k @ (np.array([zx[i], zy[i]]) - h @ x)
        p = (np.eye(4) - k @ h) @ p
        xf.append(x.copy())
        pf.append(p.copy())
    xs = [None] * n
    ps = [None] * n
    xs[-1], ps[-1] = xf[-1], pf[-1]
    for i in range(n - 2, -1, -1):
        g = pf[i] @ fs[i + 1].T @ np.linalg.inv(pp[i + 1])
        xs[i] = xf[i] + g @ (xs[i + 1] - xp[i + 1])
        ps[i] = pf[i] + g @ (ps[i + 1] - pp[i + 1]) @ g.T
    return np.array(xs), np.array(ps)


def test_kalman_smoother_matches_dense_reference():
    rng = np.random.default_rng(11)
    t = np.cumsum(rng.uniform(0.5, 4.0, 80))
    zx = 1.3 * t + rng.normal(0, 3, t.size)
    zy = -0.4 * t + rng.normal(0, 3, t.size)
    s = ConditioningSettings(pos_sd_m=3.0, accel_psd=0.7, gate_sigma=1e9)
    x, y, vx, vy, vsd, gated = kalman_smooth(t, zx, zy, np.full(t.size, np.nan), np.zeros(t.size, bool), s)
    ref, ref_p = _reference_rts(t, zx, zy, 0.7, 9.0, 25.0)
    assert not gated.any()
    np.testing.assert_allclose(x, ref[:, 0], atol=1e-8)
    np.testing.assert_allclose(y, ref[:, 1], atol=1e-8)
    np.testing.assert_allclose(vx, ref[:, 2], atol=1e-8)
    np.testing.assert_allclose(vy, ref[:, 3], atol=1e-8)
    np.testing.assert_allclose(vsd, np.sqrt(ref_p[:, 2, 2]), rtol=1e-8)


def test_reported_speed_sharpens_the_estimate():
    rng = np.random.default_rng(5)
    t = np.arange(0.0, 600.0)
    true_v = 2.0 + 1.5 * np.sin(2 * np.pi * t / 60.0)
    x = np.cumsum(true_v)
    zx = x + rng.normal(0, 3, t.size)
    zy = rng.normal(0, 3, t.size)
    rep = true_v + rng.normal(0, 0.2, t.size)
    no_rep = condition(_track_from_xy(t, zx, zy))
    with_rep = condition(_track_from_xy(t, zx, zy, rep))
    rms_no = float(np.sqrt(np.mean((no_rep.speed_mps - true_v) ** 2)))
    rms_rep = float(np.sqrt(np.mean((with_rep.speed_mps - true_v) ** 2)))
    assert rms_rep < 0.25
    assert rms_rep < 0.7 * rms_no


def test_condition_keeps_every_fix_and_flags_outliers():
    rng = np.random.default_rng(8)
    t = np.arange(0.0, 400.0)
    zx = 0.8 * t + rng.normal(0, 2, t.size)
    zy = rng.normal(0, 2, t.size)
    zx[150] += 120.0
    c = condition(_track_from_xy(t, zx, zy))
    assert len(c) == t.size
    assert c.rejected[150]
    assert abs(c.x_m[150] - c.x_m[149] - 0.8) < 2.0  # the smoothed path ignores the jump
    assert float(np.median(c.speed_mps[20:-20])) == pytest.approx(0.8, abs=0.15)


def test_gap_split_and_regular_grid():
    t = np.concatenate((np.arange(0.0, 100.0), np.arange(300.5, 400.5, 2.0)))
    x = 1.0 * t
    c = condition(_track_from_xy(t, x, np.zeros(t.size)))
    assert c.piece.tolist().count(0) == 100 and set(c.piece.tolist()) == {0, 1}
    g = resample_uniform(c, 1.0)
    # whole seconds only, none inside the gap
    assert np.allclose(g["t_s"], np.round(g["t_s"]))
    assert not ((g["t_s"] > 99.0) & (g["t_s"] < 300.5)).any()
    assert g["t_s"].iloc[0] == 0.0 and g["t_s"].iloc[-1] == 398.0
    # straight motion at 1 m/s: positions on the grid follow t
    inside = g[g["piece"] == 1]
    assert np.allclose(inside["x_m"] - inside["x_m"].iloc[0], inside["t_s"] - inside["t_s"].iloc[0], atol=0.5)


def test_too_few_fixes():
    with pytest.raises(AnalysisError):
        condition(_track_from_xy(np.array([0.0]), np.array([0.0]), np.array([0.0])))
