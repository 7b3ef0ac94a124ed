"""Overlapping chords for dense (e.g. 5 Hz) fixes.

At 5 Hz the onset fit uses one chord starting at every fix, each over the first fix at
least ``DENSE_CHORD_S`` later, instead of skipping the fixes in between. Checked here:
the chords on exactly known motion, that 1 Hz fixes keep the consecutive chords, the
error structure of overlapping chords under white position noise, and onsets on known
synthetic 5 Hz rides.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from sessions import onset
from sessions.onset import _chord_pairs, _chord_speeds, estimate_onset


def _distance(t: np.ndarray) -> np.ndarray:
    """Distance travelled at 2 m/s until t = 4 s, 5 m/s after [m]."""
    return np.where(t <= 4.0, 2.0 * t, 8.0 + 5.0 * (t - 4.0))


def test_dense_fixes_get_overlapping_chords_of_the_set_length():
    t = np.round(np.arange(0.0, 8.0 + 1e-9, 0.2), 10)
    s = _distance(t)
    ux, uy = np.cos(np.radians(-40.0)), np.sin(np.radians(-40.0))
    ta, tb, v = _chord_speeds(t, s * ux, s * uy, s * ux, s * uy)
    # one chord per fix start (every 0.2 s) while a fix lies DENSE_CHORD_S later
    np.testing.assert_allclose(tb - ta, onset.DENSE_CHORD_S, atol=1e-9)
    np.testing.assert_allclose(np.diff(ta), onset.DENSE_CHORD_STRIDE_S, atol=1e-9)
    assert ta[0] == 0.0 and tb[-1] == 8.0
    # exact mean speed over each interval: distance covered / time
    np.testing.assert_allclose(v, (_distance(tb) - _distance(ta)) / (tb - ta), atol=1e-9)


def test_one_hertz_fixes_keep_consecutive_chords():
    t = np.arange(0.0, 10.0)
    s = _distance(t)
    ta, tb, _ = _chord_speeds(t, s, 0.0 * s, s, 0.0 * s)
    np.testing.assert_allclose(ta, t[:-1])
    np.testing.assert_allclose(tb, t[1:])


def test_chord_pairs_skip_missing_fixes_and_stop_at_the_end():
    t = np.array([0.0, 0.2, 0.4, 1.5, 1.7, 1.9, 2.1])
    a, b = _chord_pairs(t, 1.0, 0.2)
    # from 0.0, 0.2 and 0.4 the first fix >= 1.0 s later is 1.5; from 1.5 on, none
    np.testing.assert_array_equal(a, [0, 1, 2])
    np.testing.assert_array_equal(b, [3, 3, 3])


def test_overlapping_chord_errors_under_white_noise():
    # A straight path at 3 m/s, 5 Hz fixes with white noise of 0.1 m per axis. The
    # along-track error of a chord of length L is (e_b - e_a) / L: variance 2 s^2 / L^2
    # (variance of the difference of two independent normals). Chords k fixes long and
    # k fixes apart share one fix with opposite signs: correlation -1/2 at lag k, 0 at
    # other nonzero lags below 2k. The sample variance is checked against the
    # chi-square band of scipy.stats.chi2 (99.9 %), the correlations against the
    # normal band of a sample correlation, SD 1/sqrt(n) (Fisher 1915, large-sample).
    rng = np.random.default_rng(11)
    sd_m, speed = 0.1, 3.0
    t = np.round(np.arange(0.0, 1200.0, 0.2), 10)
    heading = np.radians(15.0)
    sx, sy = speed * t * np.cos(heading), speed * t * np.sin(heading)
    fx = sx + rng.normal(0.0, sd_m, t.size)
    fy = sy + rng.normal(0.0, sd_m, t.size)
    ta, tb, v = _chord_speeds(t, fx, fy, sx, sy, min_chord_s=1.0, stride_s=0.2)
    err = v - speed  # the Rice correction is about s^2/(2v), small next to the noise
    n = err.size
    expected_var = 2 * sd_m**2 / 1.0**2
    lo, hi = stats.chi2(n - 1).ppf([0.0005, 0.9995]) / (n - 1)
    # the overlap (correlation -1/2 at lag 5) multiplies the variance of the sample
    # variance by 1 + 2 * 0.5^2 = 1.5 (Bartlett 1946), its SD by sqrt(1.5) = 1.22; the
    # band is widened by 1.5 to stay clear of that
    half = 1.5 * (hi - lo) / 2
    assert abs(float(np.var(err, ddof=1)) / expected_var - 1.0) < half
    k = 5
    e = err - err.mean()

    def corr(lag):
        return float(np.dot(e[:-lag], e[lag:]) / np.dot(e, e))

    band = 4.0 / np.sqrt(n)
    assert abs(corr(k) + 0.5) < band
    for lag in (1, 2, 3, 4, 6, 9):
        assert abs(corr(lag)) < band


def _dense_ride(onset_mps: float, rng: np.random.Generator, white_m: float = 0.1):
    """5 Hz fixes of a straight ride with a known onset; returns the estimator inputs.

    Sprint paddle at 1.3 m/s for 4 s, a catch accelerating at 0.35 m/s^2 up to the
    onset, planing acceleration 2.5 m/s^2 for 1.2 s, then 1 m/s^2 less (invented
    numbers of the order the simulator uses); white position noise only.
    """
    dt = 0.01
    catch_s = (onset_mps - 1.3) / 0.35
    tt = np.arange(0.0, 4.0 + catch_s + 6.0, dt)
    tau = 4.0 + catch_s
    acc = np.where(tt < 4.0, 0.0, np.where(tt < tau, 0.35, np.where(tt < tau + 1.2, 2.5, -1.0)))
    v = 1.3 + np.concatenate(([0.0], np.cumsum(acc[:-1] * dt)))
    s = np.concatenate(([0.0], np.cumsum(0.5 * (v[1:] + v[:-1]) * dt)))
    t = np.round(np.arange(0.0, tt[-1], 0.2), 10)
    d = np.interp(t, tt, s)
    heading = np.radians(200.0)
    sx, sy = d * np.cos(heading), d * np.sin(heading)
    fx = sx + rng.normal(0.0, white_m, t.size)
    fy = sy + rng.normal(0.0, white_m, t.size)
    peak = tau + 1.2
    return t, np.interp(t, tt, v), (fx, fy), (sx, sy), (3.0, peak), tau


def test_dense_chord_onsets_on_known_rides():
    # 40 synthetic 5 Hz rides per level with white noise of 0.1 m per axis: the onset
    # speed within 0.15 m/s in median (the 5 Hz target; white noise alone is what the
    # overlapping chords are for) and the two levels' difference kept to within 20 %.
    # Known-truth synthetic data; no outside reference needed beyond the construction.
    rng = np.random.default_rng(3)
    med = {}
    for level in (2.0, 3.2):
        errs = []
        for i in range(40):
            t, v, fix, track, window, tau = _dense_ride(level, rng)
            est = estimate_onset(t, v, window=window, seed=i, fix_xy_m=fix, track_xy_m=track)
            if est.found:
                errs.append(est.speed_mps - level)
        assert len(errs) >= 36
        assert float(np.median(np.abs(errs))) <= 0.15
        med[level] = level + float(np.median(errs))
    assert abs((med[3.2] - med[2.0]) / 1.2 - 1.0) < 0.2



def _fixes_at(t: np.ndarray):
    """Straight motion at 3 m/s sampled at times t: estimator inputs without noise."""
    d = 3.0 * t
    return t, d, (d, 0.0 * d), (d, 0.0 * d)


def test_sparse_fixes_give_chords_from_before_the_window():
    # fixes 2 s apart (a watch saving power): chords start up to
    # LEAD_BEFORE_WINDOW_CHORD_S before the window; 1 Hz fixes, also with a 10 s
    # dropout or one rejected fix in the window, keep the window's start
    w0, w1 = 20.0, 30.0
    t, v, fix, track = _fixes_at(np.arange(0.0, 40.0, 2.0))
    ts, _, _, src, spans = onset._prepare(t, v, None, None, (w0, w1), fix, track)
    assert src == "fixes"
    assert spans[0][0] < w0 and spans[0][0] >= w0 - onset.LEAD_BEFORE_WINDOW_CHORD_S
    t1 = np.concatenate((np.arange(0.0, 22.0), np.arange(32.0, 40.0)))
    t, v, fix, track = _fixes_at(t1)
    _, _, _, src, spans = onset._prepare(t, v, None, None, (w0, w1 + 5.0), fix, track)
    assert src == "fixes" and spans[0][0] >= w0
    t, v, fix, track = _fixes_at(np.arange(0.0, 40.0))
    _, _, _, src, spans = onset._prepare(t, v, None, None, (w0, w1), fix, track)
    assert src == "fixes" and spans[0][0] == w0
    fix[0][25] = np.nan  # one rejected fix leaves a single 2 s gap: still 1 Hz
    _, _, _, src, spans = onset._prepare(t, v, None, None, (w0, w1), fix, track)
    assert src == "fixes" and spans[0][0] == w0


def test_noise_estimate_ignores_a_turning_path():
    # A board carving a steady arc (2.0 m/s on a 10 m radius, 0.2 rad/s) with 1 Hz fixes
    # and white noise of 0.1 m; the smoothed track lags the fixes by 1 s, as a smoother
    # does where the board turns. Across the lagging direction the displacements hold
    # motion (about 0.4 m/s) as well as noise, so a noise estimate over all chords would
    # take 0.35 (m/s)^2 off the squared speeds (speeds about 0.09 m/s low). Only chords on
    # a straight smoothed path may set the correction; here none are, so the speeds stay
    # the chord of the arc, 2 R sin(w dt / 2) / dt = 1.9967 m/s (geometry of the circle),
    # plus the small Rice bias s^2 / (2 v) = 0.005 m/s of the uncorrected noise.
    rng = np.random.default_rng(5)
    r_m, v = 10.0, 2.0
    t = np.arange(0.0, 600.0, 1.0)
    ang = v / r_m * t
    x, y = r_m * np.sin(ang), r_m * (1 - np.cos(ang))
    lag = v / r_m * (t - 1.0)
    sx, sy = r_m * np.sin(lag), r_m * (1 - np.cos(lag))
    fx = x + rng.normal(0.0, 0.1, t.size)
    fy = y + rng.normal(0.0, 0.1, t.size)
    _, _, speed = _chord_speeds(t, fx, fy, sx, sy)
    chord = 2 * r_m * np.sin(v / r_m / 2)
    assert float(np.median(speed)) == pytest.approx(chord + 0.1**2 * 2 / (2 * v), abs=0.02)
