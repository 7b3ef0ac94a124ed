"""Planing onset of one ride: the instant and speed at which the board began to plane.

A ride starts in displacement mode: the surfer catches the wave and the speed rises
slowly. When the board begins to plane the acceleration jumps and the speed climbs fast
until the planing acceleration ends and the ride settles. Over the ride's catch-to-peak
window (plus a short margin after the peak) this module fits a continuous three-phase
(two-break) regression of speed against time,

.. math::

    v(t) = a + b_1 (t - \\tau)_- + b_2 [(t - \\tau)_+ - (t - \\tau - \\Delta)_+]
             + b_3 (t - \\tau - \\Delta)_+ ,

with :math:`x_- = \\min(x, 0)`, :math:`x_+ = \\max(x, 0)`, and reports the first break
:math:`\\tau` as the onset instant and :math:`a = v(\\tau)` as the onset speed; ``b1`` is the
displacement-mode acceleration, ``b2`` the planing acceleration lasting ``Delta`` and
``b3`` the trend afterwards. A speed that comes out of a smoother is the sharp speed seen
through a near-Gaussian kernel, so every column can be blurred by a Gaussian of width
``w`` (closed forms in :func:`phase_design`). For fixed ``(tau, Delta, w)`` the model is
linear in its coefficients, so the least-squares fit is found by profiling the residual
sum of squares over a grid (Hudson 1966; Hinkley 1971); the duration and blur are chosen
by the Bayesian information criterion (Schwarz 1978), and ``tau`` and ``Delta`` are
polished on a fine local grid with a final parabolic step. Everything is vectorised
over candidates and bootstrap replicates.

When the caller passes the fixes themselves (``fix_xy_m``, ``track_xy_m``) and no device
speed covers the window, the model is fitted to "chord" speeds instead of the smoothed
speed: the length of the displacement between consecutive fixes divided by the time
between them, corrected for the upward bias of a noisy length (Rice 1944), i.e. the mean
speed over each interval, which the model gives in closed form
(:func:`interval_design`). A smoother's lag and blur depend on the speed (the analysis
blends a slow and a fast pass by speed), so onsets taken from a smoothed speed are
pulled toward the middle: low onsets read high, high onsets low. Chords carry no such
distortion. Their window usually starts in the sprint paddle, so the displacement slope
acts only for a catch duration ``C`` before the onset with the speed level before that
(``C`` profiled on a grid like ``Delta``).

Every fit must show a take-off: planing acceleration at least
:data:`MIN_SLOPE_RATIO` times the displacement one, which itself is at most
:data:`MAX_DISPLACEMENT_ACCEL_MPS2`. Whether the change is clear is tested on the
bootstrap replicates refitted with the three phases and without that requirement.

The 90 % intervals come from a parametric bootstrap (Efron & Tibshirani 1993, ch. 6)
whose noise is a continuous-time first-order autoregressive process fitted to the
residuals, so that the serial correlation of a smoothed series and irregular sampling
are honoured; the intervals are bootstrap percentile intervals (Efron & Tibshirani
1993, ch. 13), never narrower than the sampling interval around the onset. For a speed
that comes only from positions, a calibrated allowance for the errors the residuals
cannot show (slowly varying GNSS errors, the smoother's lag) is added; see
``docs/onset.md``.

When the window cannot support an estimate (too few samples, a dropout where the change
lies, no rise in speed, or no clear change of acceleration) the result carries no
numbers and a reason instead; the estimator never invents an onset and never raises on
data.

References
----------
Hudson, D. J. (1966). Fitting segmented curves whose join points have to be estimated.
    J. Amer. Statist. Assoc. 61(316), 1097-1129.
Hinkley, D. V. (1971). Inference in two-phase regression. J. Amer. Statist. Assoc.
    66(336), 736-743.
Chiu, G., Lockhart, R. & Routledge, R. (2006). Bent-cable regression theory and
    applications. J. Amer. Statist. Assoc. 101(474), 542-553.
Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
Schwarz, G. (1978). Estimating the dimension of a model. Ann. Statist. 6(2), 461-464.
Marriott, F. H. C. & Pope, J. A. (1954). Bias in the estimation of autocorrelations.
    Biometrika 41, 390-402.
Rice, S. O. (1944). Mathematical analysis of random noise. Bell Syst. Tech. J. 23,
    282-332.
"""

from __future__ import annotations

import zlib
from dataclasses import dataclass

import numpy as np
from scipy import special

# --- settings (documented defaults) -------------------------------------------------
#: Fewest valid samples in the window for any estimate.
MIN_SAMPLES = 6
#: Fewest samples strictly on each side of a candidate onset.
MIN_SIDE = 2
#: Smallest speed rise over the window that can hold a change of mode [m/s].
#: Common practice, no published source: paddling speed is about 1 m/s, a ride
#: reaches several m/s, so a rise under 0.5 m/s is not a ride's take-off.
MIN_RISE_MPS = 0.5
#: A pause between samples longer than this (and longer than 4 median intervals) at the
#: onset is a dropout [s].
DROPOUT_GAP_S = 3.0
#: The planing acceleration must be at least this many times the displacement one.
#: Common practice, no published source.
MIN_SLOPE_RATIO = 1.5
#: Largest deceleration admitted in the first (displacement) phase [m/s^2]; a catch
#: does not slow down. Common practice, no published source.
MAX_FIRST_DECEL_MPS2 = 0.05
#: Largest acceleration admitted in the displacement phase of an onset fit [m/s^2].
#: Model choice, no published source: without it a short "catch" can take over the
#: first second of the planing acceleration and the onset comes out late and fast.
#: Displacement-mode catches accelerate at a few tenths of m/s^2; planing
#: accelerations start around 1.5 m/s^2 (the simulator's ranges, not measurements).
MAX_DISPLACEMENT_ACCEL_MPS2 = 1.5
#: Data used after the end of the window, to see the planing acceleration end [s]: for
#: a device or smoothed speed, and for chord speeds. Chords need more: where the board
#: gains little speed after the onset, the end of the window (85 % of the peak) comes
#: within a second of the onset, and with only a second or two after it the planing
#: acceleration cannot be told from the first turn; the onsets then come out low
#: (by 0.1-0.2 m/s on simulated sessions with onsets of 3.5-4 m/s).
MARGIN_AFTER_PEAK_S = 2.0
MARGIN_AFTER_PEAK_CHORD_S = 4.0
#: Sparse fixes (two or more gaps of more than :data:`SPARSE_GAP_S` and at most
#: :data:`SPARSE_MAX_GAP_S` between this long before the window's start and its end,
#: as a watch saving power leaves between fixes; longer gaps are dropouts, and one
#: gap is a single missed or rejected fix) give chords from this long before the window's
#: start too [s]. The
#: window starts where the smoothed speed leaves sprint-paddling pace, and a smoother
#: fed with fixes several seconds apart leaves it late, after a low onset; the catch
#: duration of the chord model keeps the sprint before the catch a level phase of its
#: own. Dense fixes do not need it (at 1 Hz it moves the bias at 3-4 m/s onsets from
#: about -0.05 to -0.13 m/s on the calibration seeds). Chosen on simulated sessions
#: with seeds disjoint from the benchmark's (see docs/onset.md).
LEAD_BEFORE_WINDOW_CHORD_S = 4.0
SPARSE_GAP_S = 1.5
SPARSE_MAX_GAP_S = 8.0
#: Blur widths tried on a smoothed speed series [s] (standard deviation of the Gaussian
#: kernel the smoother is modelled by; 0 is no blur).
BLUR_WIDTHS_S = (0.0, 0.5, 1.0)
#: Durations of the planing acceleration tried on a smoothed speed [s]; one longer than
#: the window makes the model two-phase.
DURATIONS_S = (0.4, 0.8, 1.4, 2.4, 4.0, 6.5, 1.0e3)
#: Durations tried on a device speed [s]: finer, since its sharp changes show them
#: (and it is fitted without blur widths, so the finer grid costs no more).
DURATIONS_RAW_S = (0.3, 0.5, 0.8, 1.1, 1.5, 2.0, 2.7, 3.6, 5.0, 7.0, 1.0e3)
#: Durations tried on chord speeds [s]: coarser, since they are combined with the catch
#: durations (and the polish step refines them).
DURATIONS_CHORD_S = (0.5, 1.0, 2.0, 4.0, 1.0e3)
#: Durations of the catch tried on chord speeds [s]: before it, the sprint paddle is a
#: level phase of its own, so that the displacement-mode line is fitted to the catch
#: alone (the pipeline's catch start often lies in the sprint); 1e3 is "one slope
#: throughout".
CATCH_DURATIONS_S = (1.0, 2.0, 3.5, 6.0, 1.0e3)
#: Most candidate onsets per profile.
MAX_CANDIDATES = 40
#: A smoothed series is thinned to at most this many samples per second before the fit
#: (its samples are strongly correlated, so little information is lost).
MAX_RATE_SMOOTHED_HZ = 2.5
#: Onsets and durations of the fine local grid that polishes the best fit.
POLISH_ONSETS = 21
POLISH_DURATIONS = 9
#: The bootstrap refits at the best blur width plus this many neighbours each side.
BOOT_WIDTH_SPAN = 0
#: The bootstrap refits at the best duration plus this many neighbours each side.
BOOT_DURATION_SPAN = 1
#: Extra spread of the onset speed [m/s] and instant [s] when only a smoothed speed is
#: available: position-only speeds carry slowly varying GNSS errors and the smoother's
#: lag, which the fit's residuals cannot show. Calibrated on simulated sessions with
#: seeds disjoint from the benchmark's (see docs/onset.md); recheck against real data.
SMOOTHED_ALLOWANCE_MPS = 0.35
SMOOTHED_ALLOWANCE_S = 0.6
#: Fixes closer together than this are skipped when speeds are taken from the fixes
#: themselves [s]: a shorter chord divides the fix's own white noise by a shorter time.
MIN_CHORD_S = 0.9
#: Dense sampling (median interval between usable fixes at most
#: :data:`DENSE_MAX_INTERVAL_S`, e.g. 5 Hz) gets overlapping chords instead: one starting
#: at every fix at least :data:`DENSE_CHORD_STRIDE_S` after the last start, each over
#: the first fix at least :data:`DENSE_CHORD_S` later [s]. Skipping fixes would throw
#: away most of the data; overlapping chords keep the baseline long (a fix's white
#: noise divided by a longer time) and use every fix. Chosen on simulated 5 Hz sessions
#: with seeds disjoint from the benchmark's (see docs/onset.md).
DENSE_MAX_INTERVAL_S = 0.5
DENSE_CHORD_S = 1.0
#: Chords whose smoothed direction turns by more than this from a neighbouring chord
#: are left out of the noise estimate [rad].
STRAIGHT_TURN_RAD = 0.05
DENSE_CHORD_STRIDE_S = 0.2
#: Times closer than this count as equal when chords are laid out [s] (fix times are
#: whole milliseconds; sums of 0.2 s steps are not exact in binary).
_TIME_TOL_S = 1e-6
#: Median of a chi-square distribution with one degree of freedom
#: (scipy.stats.chi2(1).median() = 0.454936...).
CHI2_1_MEDIAN = 0.454936423119572
#: Extra spread of the onset speed [m/s] and instant [s] when the speed comes from the
#: fixes (chords): the part of the GNSS error and of the model's misfit that the
#: residuals cannot show. Calibrated on simulated sessions (1 Hz, 5 Hz and smart
#: sampling, 30 one-hour sessions each, seeds 1000-1029) disjoint from the benchmark's
#: seeds; recheck against real data.
CHORD_ALLOWANCE_MPS = 0.1
CHORD_ALLOWANCE_S = 0.15
#: The same for a device (Doppler) speed: its error is correlated over about a second
#: (the receiver's velocity filter), which the residuals cannot show, and the samples of
#: watches saving power are sparse. Calibrated the same way (1 Hz, 5 Hz, smart with
#: device speed; seeds 1000-1029): speed coverage 82/84/77 % without, 88/94/84 % with;
#: the instant's coverage (87/91/87 %) needs none.
REPORTED_ALLOWANCE_MPS = 0.12
REPORTED_ALLOWANCE_S = 0.0
#: Bootstrap replicates.
N_BOOT = 150
#: Two-sided level of the reported intervals.
LEVEL = 0.90
#: A device-reported (Doppler) speed is used in place of the smoothed one when it covers
#: at least this share of the window's samples: it is a direct measurement with
#: near-independent errors, not blurred by a smoother.
REPORTED_MIN_COVERAGE = 0.8

# Reason codes: the text before the colon of :attr:`OnsetEstimate.reason`.
REASON_BAD_INPUT = "bad_input"
REASON_TOO_FEW = "too_few_samples"
REASON_DROPOUT = "dropout"
REASON_NO_RISE = "no_rise"
REASON_NO_CHANGE = "no_clear_change"
REASONS = (REASON_BAD_INPUT, REASON_TOO_FEW, REASON_DROPOUT, REASON_NO_RISE, REASON_NO_CHANGE)


@dataclass(frozen=True)
class OnsetEstimate:
    """Planing onset of one ride, or the reason why there is none.

    Attributes
    ----------
    time_s : float or None
        Onset instant, same time base as the ``t_s`` given to :func:`estimate_onset` [s].
    speed_mps : float or None
        Speed at the onset [m/s].
    ci_mps : (float, float) or None
        90 % interval of the onset speed [m/s].
    time_ci_s : (float, float) or None
        90 % interval of the onset instant [s].
    reason : str or None
        ``None`` when there is an onset; otherwise ``"<code>: <detail>"`` where code is
        one of :data:`REASONS`.
    """

    time_s: float | None
    speed_mps: float | None
    ci_mps: tuple[float, float] | None
    time_ci_s: tuple[float, float] | None
    reason: str | None

    @property
    def found(self) -> bool:
        return self.reason is None

    @property
    def reason_code(self) -> str | None:
        return None if self.reason is None else self.reason.split(":", 1)[0]

    def to_dict(self) -> dict:
        """Plain JSON-ready dict (intervals as two-element lists)."""
        return {
            "time_s": self.time_s,
            "speed_mps": self.speed_mps,
            "ci_mps": None if self.ci_mps is None else [self.ci_mps[0], self.ci_mps[1]],
            "time_ci_s": None if self.time_ci_s is None else [self.time_ci_s[0], self.time_ci_s[1]],
            "reason": self.reason,
        }


def _none(code: str, detail: str) -> OnsetEstimate:
    return OnsetEstimate(None, None, None, None, f"{code}: {detail}")


# --- pipeline -----------------------------------------------------------------------
def estimate_onset(
    t_s,
    speed_mps,
    *,
    speed_sd_mps=None,
    reported_speed_mps=None,
    window: tuple[float, float] | None = None,
    seed: int = 0,
    fix_xy_m=None,
    track_xy_m=None,
) -> OnsetEstimate:
    """Estimate the planing onset (instant and speed, with 90 % intervals) of one ride.

    Parameters
    ----------
    t_s : array_like
        Sample times [s]; irregular spacing allowed, need not be sorted.
    speed_mps : array_like
        Smoothed speed at those times [m/s]; NaN where unknown.
    speed_sd_mps : array_like, optional
        Standard deviation of the smoothed speed [m/s]. Accepted for the pipeline's
        interface; the bootstrap noise level is estimated from the residuals.
    reported_speed_mps : array_like, optional
        Speed reported by the device [m/s], NaN where absent. Used in place of the
        smoothed speed when it covers at least 80 % of the window's samples.
    window : (float, float), optional
        The ride's catch start and speed peak [s]; default the whole series. Samples up
        to :data:`MARGIN_AFTER_PEAK_S` (chords: :data:`MARGIN_AFTER_PEAK_CHORD_S`) after
        the peak are used too, to see the planing acceleration end.
    seed : int
        Seed of the bootstrap; equal inputs and seed give equal results.
    fix_xy_m : (array_like, array_like), optional
        The fixes as measured, east and north in a local frame [m] (NaN for a fix not to
        use, e.g. an outlier). With ``track_xy_m`` it replaces the smoothed speed (a
        device speed still comes first): the speed over each interval between fixes is
        the length of the fixes' displacement divided by the interval (a "chord"
        speed, corrected for the noise bias of a length), and the model is fitted to
        interval means, which it gives in closed form. No smoother stands between the
        fixes and the fit, so the onset is free of the smoother's lag and of its
        speed-dependent blur. With fewer than :data:`MIN_SAMPLES` chords in the window
        (sparse sampling) the smoothed speed is used after all.
    track_xy_m : (array_like, array_like), optional
        The smoothed positions at the same times [m]; only their direction of travel is
        used, to measure the noise of the fixes across it (see :func:`_chord_speeds`).

    Returns
    -------
    OnsetEstimate
        Numbers and ``reason=None``, or all numbers ``None`` and a reason.

    Notes
    -----
    Three-phase regression with continuous joins (Hudson 1966; Hinkley 1971), blurred
    for smoothed input, profiled over a grid of onsets, durations and blur widths;
    parametric bootstrap with correlated noise for the percentile intervals (Efron &
    Tibshirani 1993, ch. 6 and 13). See the module docstring.
    """
    with np.errstate(all="ignore"):  # absurd magnitudes end in the checks, not in warnings
        try:
            t, y, sd, src, spans = _prepare(
                t_s, speed_mps, speed_sd_mps, reported_speed_mps, window, fix_xy_m, track_xy_m
            )
        except _Unusable as exc:
            return _none(exc.code, exc.detail)
        est = _estimate_prepared(t, y, sd, src, seed, spans)
    numbers = [est.time_s, est.speed_mps, *(est.ci_mps or ()), *(est.time_ci_s or ())]
    if est.reason is None and not all(np.isfinite(x) for x in numbers):
        return _none(REASON_BAD_INPUT, "times or speeds too large for a fit")
    return est


class _Unusable(Exception):
    def __init__(self, code: str, detail: str) -> None:
        super().__init__(detail)
        self.code = code
        self.detail = detail


def _as_1d(x, name: str, n: int | None) -> np.ndarray:
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise _Unusable(REASON_BAD_INPUT, f"{name} is not numeric") from None
    if arr.ndim == 0:
        arr = arr.reshape(1)
    if arr.ndim != 1:
        raise _Unusable(REASON_BAD_INPUT, f"{name} is not one-dimensional")
    if n is not None and len(arr) != n:
        raise _Unusable(REASON_BAD_INPUT, f"{name} has {len(arr)} values, t_s has {n}")
    return arr


def _xy(pair, name: str, n: int) -> tuple[np.ndarray, np.ndarray]:
    try:
        x, y = pair
    except (TypeError, ValueError):
        raise _Unusable(REASON_BAD_INPUT, f"{name} is not a pair of arrays") from None
    return _as_1d(x, f"{name}[0]", n), _as_1d(y, f"{name}[1]", n)


def _prepare(t_s, speed_mps, speed_sd_mps, reported_speed_mps, window, fix_xy_m=None, track_xy_m=None):
    """Samples to fit: times, speeds, SDs, the source and (for chords) the interval ends."""
    t = _as_1d(t_s, "t_s", None)
    n = len(t)
    v = _as_1d(speed_mps, "speed_mps", n)
    if (fix_xy_m is None) != (track_xy_m is None):
        raise _Unusable(REASON_BAD_INPUT, "fix_xy_m and track_xy_m come together")
    if fix_xy_m is not None:
        fx, fy = _xy(fix_xy_m, "fix_xy_m", n)
        sx, sy = _xy(track_xy_m, "track_xy_m", n)
    else:
        fx = fy = sx = sy = np.full(n, np.nan)
    sd = _as_1d(speed_sd_mps, "speed_sd_mps", n) if speed_sd_mps is not None else np.full(n, np.nan)
    rep = (
        _as_1d(reported_speed_mps, "reported_speed_mps", n)
        if reported_speed_mps is not None
        else np.full(n, np.nan)
    )
    keep = np.isfinite(t)
    if window is not None:
        try:
            w0, w1 = (float(window[0]), float(window[1]))
        except (TypeError, ValueError, IndexError):
            raise _Unusable(REASON_BAD_INPUT, "window is not a pair of numbers") from None
        if not (np.isfinite(w0) and np.isfinite(w1)) or w1 <= w0:
            raise _Unusable(REASON_BAD_INPUT, f"window ({w0}, {w1}) is empty or not finite")
        usable = np.isfinite(t) & np.isfinite(fx) & np.isfinite(fy)
        usable &= (t >= w0 - LEAD_BEFORE_WINDOW_CHORD_S) & (t <= w1)
        gaps = np.diff(np.sort(t[usable]))
        sparse = fix_xy_m is not None and int(np.sum((gaps > SPARSE_GAP_S) & (gaps <= SPARSE_MAX_GAP_S))) >= 2
        lead = LEAD_BEFORE_WINDOW_CHORD_S if sparse else 0.0
        keep &= (t >= w0 - lead) & (t <= w1 + max(MARGIN_AFTER_PEAK_S, MARGIN_AFTER_PEAK_CHORD_S))
    cols = [a[keep] for a in (t, v, sd, rep, fx, fy, sx, sy)]
    order = np.argsort(cols[0], kind="stable")
    cols = [a[order] for a in cols]
    if len(cols[0]):
        first = np.concatenate(([True], np.diff(cols[0]) > 0))  # drop repeated times
        cols = [a[first] for a in cols]
    if window is not None:
        # the chords keep their own margin; other speeds end MARGIN_AFTER_PEAK_S after it
        chord_cols = [a.copy() for a in cols]
        near = (cols[0] >= w0) & (cols[0] <= w1 + MARGIN_AFTER_PEAK_S)
        cols = [a[near] for a in cols]
    else:
        chord_cols = cols
    t, v, sd, rep, fx, fy, sx, sy = cols
    n_rep = int(np.isfinite(rep).sum())
    if len(t) and n_rep >= REPORTED_MIN_COVERAGE * len(t) and n_rep >= MIN_SAMPLES:
        ok = np.isfinite(rep)
        return t[ok], rep[ok], np.full(int(ok.sum()), np.nan), "reported", None
    if fix_xy_m is not None:
        ta, tb, chord = _chord_speeds(*(chord_cols[i] for i in (0, 4, 5, 6, 7)))
        if len(chord) >= MIN_SAMPLES:
            return 0.5 * (ta + tb), chord, np.full(len(chord), np.nan), "fixes", (ta, tb)
        # too few fixes for chords (sparse sampling): fall back to the smoothed speed
    ok = np.isfinite(v)
    if len(t) and ok.sum() < len(t):
        # fill the smoothed speed's holes with the device speed where present
        fill = ~ok & np.isfinite(rep)
        v = np.where(fill, rep, v)
        ok = np.isfinite(v)
    t, v, sd = t[ok], v[ok], sd[ok]
    if len(t) > 1:
        t, v, sd = _thin(t, v, sd, MAX_RATE_SMOOTHED_HZ)
    if len(t) < MIN_SAMPLES:
        raise _Unusable(REASON_TOO_FEW, f"{len(t)} valid speed samples in the window, need {MIN_SAMPLES}")
    return t, v, sd, "smoothed", None


def _chord_speeds(t, fx, fy, sx, sy, min_chord_s=None, stride_s=None):
    """Mean speed over each interval between usable fixes.

    Fixes with a non-finite position are skipped, and so are fixes closer than
    ``min_chord_s`` to the last one kept. For the interval from fix ``a`` to fix ``b``
    the raw speed is the length of the displacement over the time, ``|f_b - f_a| / dt``.
    The length of a noisy vector is biased upward by about ``s^2 / (2 v)`` (the mean of
    a Rice distribution; Rice 1944), ``s^2`` being the noise variance of one component,
    which matters at paddling speeds. ``s^2`` is estimated from the component of the
    displacements across the direction of travel of the smoothed positions (pure noise
    on a straight path; robust median of the squares over the window, divided by 0.4549,
    the median of a chi-square with one degree of freedom), and each speed is corrected
    to ``sqrt(max(v_raw^2 - s^2, 0))``, which removes the bias to second order. The
    length, not the projection on the smoothed direction, is used because the smoothed
    direction lags where the board turns at the take-off. Returns the interval starts,
    ends and speeds [s, s, m/s].
    """
    ok = np.isfinite(t) & np.isfinite(fx) & np.isfinite(fy) & np.isfinite(sx) & np.isfinite(sy)
    idx = np.flatnonzero(ok)
    if len(idx) < 2:
        return np.empty(0), np.empty(0), np.empty(0)
    if min_chord_s is None:  # the module's settings, by the density of the fixes
        dense = float(np.median(np.diff(t[idx]))) <= DENSE_MAX_INTERVAL_S
        min_chord_s = DENSE_CHORD_S if dense else MIN_CHORD_S
        stride_s = DENSE_CHORD_STRIDE_S if dense else None
    a, b = _chord_pairs(t[idx], min_chord_s, stride_s)
    a, b = idx[a], idx[b]
    if len(a) == 0:
        return np.empty(0), np.empty(0), np.empty(0)
    dt = t[b] - t[a]
    dfx, dfy = fx[b] - fx[a], fy[b] - fy[a]
    dsx, dsy = sx[b] - sx[a], sy[b] - sy[a]
    norm = np.hypot(dsx, dsy)
    moving = norm > 0.01
    raw2 = (dfx * dfx + dfy * dfy) / (dt * dt)
    # only where the smoothed path runs straight: where it turns, the smoothed direction
    # lags the board's and the across-track part holds motion as well as noise
    heading = np.arctan2(dsy, dsx)
    turn = np.abs(np.angle(np.exp(1j * np.diff(heading))))
    calm = np.ones(len(a), dtype=bool)
    calm[1:] &= turn <= STRAIGHT_TURN_RAD
    calm[:-1] &= turn <= STRAIGHT_TURN_RAD
    use = moving & calm
    if use.sum() >= 3:
        cross = (dfx * dsy - dfy * dsx)[use] / norm[use] / dt[use]
        noise2 = float(np.median(cross * cross)) / CHI2_1_MEDIAN
    else:
        noise2 = 0.0
    return t[a], t[b], np.sqrt(np.maximum(raw2 - noise2, 0.0))


def _chord_pairs(t: np.ndarray, min_chord_s: float, stride_s: float | None) -> tuple[np.ndarray, np.ndarray]:
    """Start and end indices of the chords over sorted times ``t``.

    Without ``stride_s``: consecutive chords between kept fixes, a fix being kept when
    it lies at least ``min_chord_s`` after the last kept one. With ``stride_s``:
    overlapping chords, one starting at every fix at least ``stride_s`` after the last
    start, each ending at the first fix at least ``min_chord_s`` after its start.
    """
    if len(t) < 2:
        return np.empty(0, dtype=int), np.empty(0, dtype=int)
    if stride_s is None:
        kept = [0]
        for i in range(1, len(t)):
            if t[i] - t[kept[-1]] >= min_chord_s:
                kept.append(i)
        k = np.asarray(kept)
        return k[:-1], k[1:]
    starts = [0]
    for i in range(1, len(t)):
        if t[i] - t[starts[-1]] >= stride_s - _TIME_TOL_S:
            starts.append(i)
    a = np.asarray(starts)
    b = np.searchsorted(t, t[a] + min_chord_s - _TIME_TOL_S, side="left")
    keep = b < len(t)
    return a[keep], b[keep]


def _thin(t, v, sd, max_rate_hz):
    """Keep at most one sample per 1/max_rate_hz seconds (the first of each slot)."""
    slot = np.floor((t - t[0]) * max_rate_hz)
    first = np.concatenate(([True], np.diff(slot) > 0))
    return t[first], v[first], sd[first]


def _estimate_prepared(t: np.ndarray, y: np.ndarray, sd: np.ndarray, src: str, seed: int, spans=None) -> OnsetEstimate:
    n = len(t)
    dt = np.diff(t)
    dt_med = float(np.median(dt))
    gap_limit = max(DROPOUT_GAP_S, 4.0 * dt_med)

    k = max(1, min(3, n // 4))
    rise = float(np.max(y[k:]) - np.median(y[:k])) if n > k else 0.0
    if not rise >= MIN_RISE_MPS:
        change = f"rises by only {rise:.2f} m/s" if rise > 0 else f"falls by {-rise:.2f} m/s"
        return _none(REASON_NO_RISE, f"the speed {change} from catch to peak; a take-off needs a rise of {MIN_RISE_MPS} m/s")

    t0 = float(t[0])  # time from the first sample (conditioning of the normal equations)
    span = float(t[-1] - t[0])
    tc = t - t0
    cand = _candidates(tc, MIN_SIDE, MAX_CANDIDATES)
    if len(cand) < 3:
        return _none(REASON_TOO_FEW, f"{n} samples leave no room for a break with {MIN_SIDE} samples each side")
    # the first grid axis: blur widths of a smoothed speed, catch durations of chords
    widths = np.asarray(BLUR_WIDTHS_S if src == "smoothed" else CATCH_DURATIONS_S if src == "fixes" else (0.0,))
    durations = np.asarray({"smoothed": DURATIONS_S, "fixes": DURATIONS_CHORD_S}.get(src, DURATIONS_RAW_S))
    if spans is None:
        def make_design(onsets, durs, ws):
            return phase_design(tc, onsets, durs, ws)
    else:  # interval means of the sharp model (no blur: no smoother in between)
        ta, tb = spans[0] - t0, spans[1] - t0

        def make_design(onsets, durs, ws):
            return interval_design(ta, tb, onsets, durs, ws)


    design = make_design(cand, durations, widths)  # (W, D, M, n, 4)
    grid_shape = design.shape[:3]
    n_p = design.shape[-1]
    design = design.reshape(-1, n, n_p)
    gram_inv, ok = _gram_inverse(design)
    if not ok.any():
        return _none(REASON_TOO_FEW, "samples too clustered in time to fit the phases")

    # parameters per (width, duration) pair: a, b1, b2 and the onset; b3 and the
    # duration when the planing acceleration ends; the blur width when it is not 0
    n_params = (4 + 2 * (durations < 1e3)[None, :] + _axis_params(widths, src)[:, None]).reshape(-1)
    fit = _best_fits(design, gram_inv, ok, y[None, :], cand, grid_shape, n_params)
    if fit["flat"][0] < 0:
        return _none(REASON_NO_CHANGE, "no fit with a steady or rising first phase")
    tau, onset_speed, beta, fitted = _polish(make_design, src, tc, y, cand, widths, durations, fit)
    b1, b2 = float(beta[1]), float(beta[2])

    # dropout at the change
    i_after = int(np.searchsorted(tc, tau, side="right"))
    if 0 < i_after < n and dt[i_after - 1] > gap_limit:
        return _none(
            REASON_DROPOUT,
            f"{dt[i_after - 1]:.1f} s without samples where the change lies (limit {gap_limit:.1f} s)",
        )
    if float(dt.max()) > 0.5 * span:
        return _none(REASON_DROPOUT, f"one pause of {float(dt.max()):.1f} s covers half the window")
    if not _took_off(b1, b2):
        return _none(
            REASON_NO_CHANGE,
            f"acceleration {b1:.2f} m/s^2 before and {b2:.2f} m/s^2 after the best break: no take-off",
        )
    if not (float(np.min(y)) - MIN_RISE_MPS <= onset_speed <= float(np.max(y))):
        return _none(REASON_NO_CHANGE, f"the fitted onset speed {onset_speed:.2f} m/s lies outside the speeds seen")

    # parametric bootstrap with serially correlated (continuous-time AR(1)) noise, refit
    # over the onset grid at the best blur width and the neighbouring durations
    resid = y - fitted
    n_par = int(n_params[int(fit["iw"][0]) * len(durations) + int(fit["idur"][0])])
    w_best = float(widths[int(fit["iw"][0])]) if src == "smoothed" else 0.0
    sigma, corr_time = _noise_model(tc, resid, n_par, min_corr_time_s=np.sqrt(np.pi) * w_best)
    rng = _generator(seed)
    ystar = fitted[None, :] + _ou_noise(tc, sigma, corr_time, N_BOOT, rng)  # (B, n)
    iw, idur = int(fit["iw"][0]), int(fit["idur"][0])
    sw = slice(max(iw - BOOT_WIDTH_SPAN, 0), iw + BOOT_WIDTH_SPAN + 1)
    sdur = slice(max(idur - BOOT_DURATION_SPAN, 0), idur + BOOT_DURATION_SPAN + 1)
    sub = np.arange(design.shape[0]).reshape(grid_shape)[sw, sdur, :]
    sub_shape = sub.shape
    sub = sub.reshape(-1)
    sub_params = n_params.reshape(grid_shape[:2])[sw, sdur].reshape(-1)
    boot = _best_fits(design[sub], gram_inv[sub], ok[sub], ystar, cand, sub_shape, sub_params)
    good = boot["flat"] >= 0
    # the change is clear when the best fit of the resamples shows a take-off in nearly
    # all of them even when a take-off is not required; that test is made with the
    # three phases alone (for chords: no separate paddling phase, which could hold the
    # take-off in its own break), at the chosen blur width otherwise
    iw_test = len(widths) - 1 if src == "fixes" else iw
    test = np.arange(design.shape[0]).reshape(grid_shape)[iw_test : iw_test + 1, sdur, :]
    test_shape = test.shape
    test = test.reshape(-1)
    test_params = n_params.reshape(grid_shape[:2])[iw_test : iw_test + 1, sdur].reshape(-1)
    free = _best_fits(design[test], gram_inv[test], ok[test], ystar, cand, test_shape, test_params, take_off_only=False)
    took_off = np.mean((free["flat"] >= 0) & _took_off(free["coef"][1], free["coef"][2]))
    if took_off < 0.5 + LEVEL / 2:
        return _none(
            REASON_NO_CHANGE,
            f"the change of acceleration is not clear: present in {100 * took_off:.0f} % of resamples",
        )
    tau_b, speed_b = boot["tau"][good], boot["speed"][good]
    if src in ("smoothed", "fixes", "reported"):
        # allowance for errors the residuals cannot show: the smoother's own distortion,
        # the slowly varying part of the GNSS error in the fixes, the model's misfit
        extra_s, extra_mps = {
            "smoothed": (SMOOTHED_ALLOWANCE_S, SMOOTHED_ALLOWANCE_MPS),
            "fixes": (CHORD_ALLOWANCE_S, CHORD_ALLOWANCE_MPS),
            "reported": (REPORTED_ALLOWANCE_S, REPORTED_ALLOWANCE_MPS),
        }[src]
        tau_b = tau_b + rng.normal(0.0, extra_s, size=tau_b.shape)
        speed_b = speed_b + rng.normal(0.0, extra_mps, size=speed_b.shape)
    lo_q, hi_q = (1 - LEVEL) / 2, (1 + LEVEL) / 2
    t_lo, t_hi = np.quantile(tau_b, [lo_q, hi_q])
    v_lo, v_hi = np.quantile(speed_b, [lo_q, hi_q])
    # the break is resolved only to within the sampling interval around it: the
    # intervals hold at least the central 90 % of that interval (a uniform position
    # within it) and the speeds along the displacement-phase slope there
    half = 0.5 * LEVEL * _local_interval(tc, tau)
    t_lo, t_hi = min(t_lo, tau - half), max(t_hi, tau + half)
    dv = max(b1, 0.0) * half
    v_lo, v_hi = min(v_lo, onset_speed - dv), max(v_hi, onset_speed + dv)
    return OnsetEstimate(
        time_s=tau + t0,
        speed_mps=onset_speed,
        ci_mps=(float(v_lo), float(v_hi)),
        time_ci_s=(float(t_lo) + t0, float(t_hi) + t0),
        reason=None,
    )


# --- pure functions -----------------------------------------------------------------
def _polish(make_design, src, tc, y, cand, widths, durations, fit):
    """Refine the onset on a fine local grid at the chosen blur width.

    The profile over onsets is kinked at the samples, so the parabola through the
    coarse grid can miss its minimum; :data:`POLISH_ONSETS` onsets spanning the
    neighbouring coarse grid points are refitted with :data:`POLISH_DURATIONS` durations
    spanning the neighbouring grid durations (and
    "none" if it is a neighbour), and the best by the same criterion kept, with its own
    parabolic refinement. Returns the onset,
    the speed there, the coefficients and the fitted curve.
    """
    j = int(fit["flat"][0]) % len(cand)
    lo, hi = cand[max(j - 1, 0)], cand[min(j + 1, len(cand) - 1)]
    fine = np.linspace(lo, hi, POLISH_ONSETS)
    iw, idur = int(fit["iw"][0]), int(fit["idur"][0])
    d = _fine_between(durations, idur, POLISH_DURATIONS)
    w = widths[iw : iw + 1]  # blur width or catch duration as chosen
    design = make_design(fine, d, w).reshape(len(w) * len(d) * len(fine), len(tc), -1)
    gram_inv, ok = _gram_inverse(design)
    k = (4 + 2 * (d < 1e3)[None, :] + _axis_params(w, src)[:, None]).reshape(-1)
    res = _best_fits(design, gram_inv, ok, y[None, :], fine, (len(w), len(d), len(fine)), k)
    if res["flat"][0] < 0:  # keep the coarse fit
        coarse = make_design(cand[j : j + 1], durations[idur : idur + 1], widths[iw : iw + 1]).reshape(len(tc), -1)
        beta = fit["coef"][:, 0]
        return float(fit["tau"][0]), float(fit["speed"][0]), beta, coarse @ beta
    beta = res["coef"][:, 0]
    return float(res["tau"][0]), float(res["speed"][0]), beta, design[int(res["flat"][0])] @ beta


def _fine_between(grid, i: int, count: int, span: int = 1) -> np.ndarray:
    """``count`` values spaced geometrically between the grid's ``span``-th neighbours of
    ``grid[i]``, plus 1e3 ("none") when that is among them."""
    grid = np.asarray(grid, dtype=float)
    near = grid[max(i - span, 0) : i + span + 1]
    finite = near[near < 1e3]
    out = np.geomspace(finite.min(), finite.max(), count) if len(finite) > 1 else finite
    if (near >= 1e3).any():
        out = np.append(out, 1e3)
    return out


def _axis_params(widths: np.ndarray, src: str) -> np.ndarray:
    """Parameters that the first grid axis adds: the blur width, or the catch duration
    (none for "no separate catch", 1e3)."""
    if src == "fixes":
        return 1 * (np.asarray(widths) < 1e3)
    return 1 * (np.asarray(widths) > 0)


def _generator(seed) -> np.random.Generator:
    """Random generator for a seed; a seed numpy cannot use is folded into one it can."""
    try:
        return np.random.default_rng(seed)
    except (TypeError, ValueError):
        return np.random.default_rng(zlib.crc32(repr(seed).encode("utf-8")))


def _local_interval(t: np.ndarray, tau: float) -> float:
    """Length of the sampling interval that holds tau [s]."""
    i = int(np.clip(np.searchsorted(t, tau, side="right"), 1, len(t) - 1))
    return float(t[i] - t[i - 1])


def _took_off(b1, b2):
    """Planing acceleration positive and clearly above the displacement one."""
    return (b2 > 0) & (b2 > MIN_SLOPE_RATIO * np.maximum(b1, 0.0))


def _blurred_ramp(x: np.ndarray, w: np.ndarray) -> np.ndarray:
    """E[(x + U)_+] for U ~ N(0, w^2), one width per leading index; (x)_+ where w = 0."""
    out = np.empty(x.shape)
    for i, wi in enumerate(np.asarray(w, dtype=float).reshape(-1)):
        xi = x[i]
        if wi > 0:
            z = xi / wi
            out[i] = xi * special.ndtr(z) + wi * np.exp(-0.5 * z * z) / np.sqrt(2.0 * np.pi)
        else:
            out[i] = np.maximum(xi, 0.0)
    return out


def phase_design(t: np.ndarray, onsets: np.ndarray, durations: np.ndarray, widths=(0.0,)) -> np.ndarray:
    """Design matrices of the continuous three-phase model on a grid of its nonlinear parameters.

    With blur width ``w > 0`` every column is the expectation of the sharp column over a
    Gaussian shift of the time axis with standard deviation ``w``: a sharp three-phase
    speed seen through a symmetric smoothing kernel (a smooth-transition model in the
    spirit of the bent cable of Chiu, Lockhart & Routledge 2006). For ``U ~ N(0, w^2)``,
    ``E[(x+U)_+] = x Phi(x/w) + w phi(x/w)`` and ``E[(x+U)_-] = x - E[(x+U)_+]``.

    Parameters
    ----------
    t : ndarray, shape (n,)
        Sample times [s].
    onsets : ndarray, shape (M,)
        Candidate onsets tau [s].
    durations : ndarray, shape (D,)
        Candidate durations Delta of the planing acceleration [s].
    widths : sequence of float, length W
        Blur widths [s]; 0 is the sharp model.

    Returns
    -------
    ndarray, shape (W, D, M, n, 4)
        Columns 1, (t - tau)_-, (t - tau)_+ - (t - tau - Delta)_+, (t - tau - Delta)_+
        (blurred); the first coefficient is the sharp model's speed at the onset.
    """
    w = np.asarray(widths, dtype=float)[:, None, None, None]
    x1 = t[None, None, None, :] - np.asarray(onsets, dtype=float)[None, None, :, None]
    x2 = x1 - np.asarray(durations, dtype=float)[None, :, None, None]
    shape = (w.shape[0], len(durations), len(onsets), len(t))
    x1 = np.broadcast_to(x1, shape)
    p1 = _blurred_ramp(x1, w)
    p2 = _blurred_ramp(np.broadcast_to(x2, shape), w)
    return np.stack((np.ones(shape), x1 - p1, p1 - p2, p2), axis=-1)


def _half_square(x: np.ndarray) -> np.ndarray:
    """max(x, 0)^2 / 2: the antiderivative of the ramp (x)_+."""
    xp = np.maximum(x, 0.0)
    return 0.5 * xp * xp


def _half_neg_square(x: np.ndarray) -> np.ndarray:
    """min(x, 0)^2 / 2: the antiderivative of (x)_-."""
    xn = np.minimum(x, 0.0)
    return 0.5 * xn * xn


def interval_design(t_start, t_end, onsets, durations, catch_durations=(1.0e3,)) -> np.ndarray:
    """Design matrices of the sharp three-phase model averaged over intervals.

    A speed taken from two fixes is the mean of the true speed between them, so each
    column of :func:`phase_design` (without blur) is replaced by its mean over the
    interval ``[t_start, t_end]``: ``(F(t_end) - F(t_start)) / (t_end - t_start)`` with
    ``F`` the column's antiderivative, ``F = t`` for the constant,
    ``x^2/2 - (x)_+^2/2`` for ``(x)_-`` and ``(x)_+^2/2`` for ``(x)_+``. The model stays
    linear in its coefficients, and the onset can be placed inside an interval, whose
    mean depends on where in it the break lies.

    Parameters
    ----------
    t_start, t_end : ndarray, shape (n,)
        Interval ends [s], ``t_end > t_start``.
    onsets : ndarray, shape (M,)
    durations : ndarray, shape (D,)

    Returns
    -------
    ndarray, shape (1, D, M, n, 4)
        Same layout and coefficients as :func:`phase_design` with one blur width, 0.
    """
    ta = np.asarray(t_start, dtype=float)
    tb = np.asarray(t_end, dtype=float)
    tau = np.asarray(onsets, dtype=float)[None, :, None]
    dur = np.asarray(durations, dtype=float)[:, None, None]
    length = (tb - ta)[None, None, :]
    a1, b1 = ta[None, None, :] - tau, tb[None, None, :] - tau  # (1, M, n)
    a2, b2 = a1 - dur, b1 - dur  # (D, M, n)
    ramp1 = (_half_square(b1) - _half_square(a1)) / length
    ramp2 = (_half_square(b2) - _half_square(a2)) / length
    shape = (len(dur), tau.shape[1], len(ta))
    ramp1 = np.broadcast_to(ramp1, shape)
    neg1 = np.broadcast_to((_half_neg_square(b1) - _half_neg_square(a1)) / length, shape)
    out = []
    for c in np.asarray(catch_durations, dtype=float).reshape(-1):
        # the catch (x)_- - (x + C)_-: the displacement-mode slope for C seconds before
        # the onset, level before that (the sprint paddle); C = 1e3 is one slope throughout
        neg0 = np.broadcast_to((_half_neg_square(b1 + c) - _half_neg_square(a1 + c)) / length, shape)
        out.append(np.stack((np.ones(shape), neg1 - neg0, ramp1 - ramp2, ramp2), axis=-1))
    return np.stack(out)


def _candidates(t: np.ndarray, min_side: int, max_count: int) -> np.ndarray:
    n = len(t)
    lo, hi = t[min_side - 1], t[n - min_side]
    if not hi > lo:
        return np.empty(0)
    # a grid at least twice as fine as the median sampling interval
    step = float(np.median(np.diff(t))) / 2.0
    count = int(np.clip(np.ceil((hi - lo) / max(step, 1e-9)) + 1, 3, max_count))
    grid = np.linspace(lo, hi, count)
    # keep only candidates with min_side samples strictly on each side
    left = np.searchsorted(t, grid, side="left")
    right = n - np.searchsorted(t, grid, side="right")
    return grid[(left >= min_side) & (right >= min_side)]


def _gram_inverse(design: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Inverse normal matrices (K, p, p) and a mask of the usable ones.

    Column 3 (the trend after the planing acceleration) is all but zero when the
    acceleration lasts past the window's end; a tiny ridge on that coefficient then
    turns the fit into the two-phase one instead of a singular matrix. A design is
    unusable when the determinant of its normal matrix scaled to unit diagonal (1 for
    orthogonal columns, 0 for dependent ones) is below 1e-12.
    """
    n = design.shape[1]
    gram = np.matmul(design.transpose(0, 2, 1), design)
    for i in range(3, gram.shape[1]):
        gram[:, i, i] += 1e-9 * n
    diag = np.sqrt(np.einsum("kpp->kp", gram))
    with np.errstate(all="ignore"):
        scaled = gram / (diag[:, :, None] * diag[:, None, :])
        det = np.linalg.det(np.nan_to_num(scaled))
    ok = np.isfinite(det) & (det > 1e-12)
    inv = np.zeros_like(gram)
    if ok.any():
        try:
            inv[ok] = np.linalg.inv(gram[ok])
        except np.linalg.LinAlgError:  # pragma: no cover - guarded by the determinant test
            for i in np.flatnonzero(ok):
                try:
                    inv[i] = np.linalg.inv(gram[i])
                except np.linalg.LinAlgError:
                    ok[i] = False
    return inv, ok


def _best_fits(design, gram_inv, ok, y, cand, grid_shape, n_params, take_off_only: bool = True) -> dict:
    """Best onset, duration and blur width for every series in y (B, n).

    The (blur width, duration) pair is chosen by the Bayesian information criterion
    ``n log(RSS / n) + k log(n)`` (Schwarz 1978), ``k = n_params`` per pair (W * D,), so
    that a third phase or a blur is only used when the data ask for it; the onset is
    the least-squares one for that pair.

    Fits whose first phase slows down (slope below -:data:`MAX_FIRST_DECEL_MPS2`), whose
    planing phase does not speed up, or whose third phase speeds up faster than the
    planing phase are not admitted; with ``take_off_only`` neither are fits whose planing
    acceleration is not clearly above the displacement one (:func:`_took_off`): the
    onset is by definition where the acceleration jumps. Returns a dict of arrays over
    the B series: ``tau`` (refined onset), ``speed`` (value at the onset), ``flat``
    (index of the best design, -1 when none is admissible), ``iw``/``idur`` (its blur
    width and duration indices) and ``coef`` (p, B), the coefficients there.
    """
    n_b = y.shape[0]
    n_w, n_d, n_c = grid_shape
    rss, coef = _profile(design, gram_inv, y)  # (K, B), (K, B, p)
    b2 = coef[:, :, 2]
    admissible = ok[:, None] & (coef[:, :, 1] >= -MAX_FIRST_DECEL_MPS2) & (b2 > 0) & (coef[:, :, 3] <= b2)
    if take_off_only:
        admissible &= _took_off(coef[:, :, 1], b2) & (coef[:, :, 1] <= MAX_DISPLACEMENT_ACCEL_MPS2)
    rss = np.where(admissible, rss, np.inf)
    rss3 = rss.reshape(n_w * n_d, n_c, n_b)
    n = y.shape[1]
    with np.errstate(divide="ignore"):
        crit = n * np.log(np.maximum(rss3.min(axis=1), 1e-300) / n) + np.log(n) * np.asarray(n_params, dtype=float)[:, None]
    crit = np.where(np.isfinite(rss3.min(axis=1)), crit, np.inf)
    wd = np.argmin(crit, axis=0)  # (B,) best (width, duration) pair
    cols = np.arange(n_b)
    rows = rss3[wd, :, cols].T  # (M, B): profile over onsets at each series' best pair
    tau, j = _refine_break(cand, rows)
    coef4 = coef.reshape(n_w * n_d, n_c, n_b, coef.shape[2])
    speed = _interp_at(cand, coef4[wd, :, cols, 0].T, tau, j)
    flat = wd * n_c + j
    found = np.isfinite(rss[flat, cols])
    return {
        "tau": tau,
        "speed": speed,
        "flat": np.where(found, flat, -1),
        "iw": wd // n_d,
        "idur": wd % n_d,
        "coef": coef[flat, cols, :].T,
        "crit": crit[wd, cols],
    }


def _profile(design: np.ndarray, gram_inv: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Least-squares fit of every candidate design to every series.

    Parameters
    ----------
    design : (K, n, p); gram_inv : (K, p, p), symmetric; y : (B, n)

    Returns
    -------
    rss : (K, B) residual sums of squares; coef : (K, B, p) coefficients.
    """
    xty = np.matmul(y[None, :, :], design)  # (K, B, p)
    coef = np.matmul(xty, gram_inv)  # (K, B, p)
    rss = np.sum(y * y, axis=1)[None, :] - np.sum(xty * coef, axis=2)
    return rss, coef


def _refine_break(cand: np.ndarray, rss: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Best onset per series, refined by a parabola through the grid minimum and neighbours.

    Returns the refined onsets (B,) and the index of the grid minimum (B,).
    """
    m = len(cand)
    j = np.argmin(rss, axis=0)
    jc = np.clip(j, 1, m - 2)
    cols = np.arange(rss.shape[1])
    r0, r1, r2 = rss[jc - 1, cols], rss[jc, cols], rss[jc + 1, cols]
    h = cand[jc + 1] - cand[jc]  # uniform grid
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = r0 - 2.0 * r1 + r2
        shift = np.where(np.isfinite(denom) & (denom > 0), 0.5 * (r0 - r2) / denom, 0.0)
    shift = np.clip(shift, -0.5, 0.5)
    interior = (j > 0) & (j < m - 1)
    tau = np.where(interior, cand[jc] + shift * h, cand[j])
    return tau, j


def _interp_at(cand: np.ndarray, values: np.ndarray, tau: np.ndarray, j: np.ndarray) -> np.ndarray:
    """Linear interpolation of per-candidate values (M, B) at each series' onset tau (B,)."""
    m = len(cand)
    cols = np.arange(values.shape[1])
    k = np.clip(np.where(tau >= cand[j], j, j - 1), 0, m - 2)
    frac = np.clip((tau - cand[k]) / (cand[k + 1] - cand[k]), 0.0, 1.0)
    a, b = values[k, cols], values[k + 1, cols]
    return np.where(np.isfinite(b), (1 - frac) * a + frac * b, a)


def _noise_model(t: np.ndarray, resid: np.ndarray, n_par: int, min_corr_time_s: float = 0.0) -> tuple[float, float]:
    """Marginal SD [m/s] and correlation time [s] of the noise, from fit residuals.

    The lag-one autocorrelation at the median sampling interval is corrected for its
    small-sample bias, -(1 + 3 rho) / n (Marriott & Pope 1954), and for the fitted
    coefficients (n_par / n); the residual variance is corrected for the degrees of
    freedom that the fit absorbs, about ``n_par`` times the integrated autocorrelation
    time (1 + rho) / (1 - rho) of a first-order autoregression.
    """
    n = len(resid)
    r = resid - resid.mean()
    den = float(np.dot(r, r))
    dt_med = float(np.median(np.diff(t)))
    rho = float(np.dot(r[:-1], r[1:]) / den) if den > 0 else 0.0
    rho = rho + (1 + 3 * max(rho, 0.0)) / n + n_par / n
    if min_corr_time_s > 0:
        rho = max(rho, float(np.exp(-dt_med / min_corr_time_s)))
    rho = min(max(rho, 0.0), 0.98)
    iat = (1 + rho) / (1 - rho)
    keep = max(1.0 - n_par * iat / n, 0.25)
    sigma = float(np.sqrt(den / n / keep))
    corr_time = -dt_med / np.log(rho) if rho > 0 else 0.0
    return sigma, corr_time


def _ou_noise(t: np.ndarray, sigma: float, corr_time: float, n_boot: int, rng: np.random.Generator) -> np.ndarray:
    """Stationary Ornstein-Uhlenbeck noise at times t, shape (n_boot, n).

    e_i = phi_i e_(i-1) + sqrt(1 - phi_i^2) sigma z_i with phi_i = exp(-dt_i / T): the
    exact discretisation of a continuous-time first-order autoregression at irregular
    times.
    """
    n = len(t)
    z = rng.standard_normal((n_boot, n))
    if corr_time <= 0:
        return sigma * z
    phi = np.exp(-np.diff(t) / corr_time)
    innov = np.sqrt(1.0 - phi**2)
    out = np.empty((n_boot, n))
    out[:, 0] = z[:, 0]
    for i in range(1, n):
        out[:, i] = phi[i - 1] * out[:, i - 1] + innov[i - 1] * z[:, i]
    return sigma * out
