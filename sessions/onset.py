"""Planing onset of one ride: the instant and speed at which the board began to plane.

A ride starts in displacement mode: the surfer catches the wave and the speed rises
slowly. When the board begins to plane the acceleration jumps and the speed climbs fast
to the ride's peak. Over the ride's catch-to-peak window this module fits a continuous
two-phase ("hinge" or "broken-stick") regression of speed against time,

.. math::

    v(t) = a + b_1 \\min(t - \\tau, 0) + b_2 \\max(t - \\tau, 0)
             + c \\max(t - \\tau, 0)^2 ,

and reports the break :math:`\\tau` as the onset instant and :math:`a = v(\\tau)` as the
onset speed. The optional quadratic term lets the planing phase bend over as the speed
approaches its peak. For a fixed :math:`\\tau` the model is linear in its coefficients,
so the least-squares break is found by profiling the residual sum of squares over a grid
of candidate breaks (Hudson 1966; Hinkley 1971), with a parabolic refinement between
grid points. Everything is vectorised over candidates and bootstrap replicates.

The 90 % intervals come from a moving-block residual bootstrap (Künsch 1989), which keeps
the serial correlation of the residuals of a smoothed speed series; the residuals are
rescaled for the fitted degrees of freedom (Davison & Hinkley 1997, sec. 6.2.3) and the
intervals are bootstrap percentile intervals (Efron & Tibshirani 1993, ch. 13).

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
Künsch, H. R. (1989). The jackknife and the bootstrap for general stationary
    observations. Ann. Statist. 17(3), 1217-1241.
Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
Davison, A. C. & Hinkley, D. V. (1997). Bootstrap Methods and their Application.
    Cambridge University Press.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

# --- settings (documented defaults) -------------------------------------------------
#: Fewest valid samples in the window for any estimate.
MIN_SAMPLES = 6
#: Fewest samples strictly on each side of a candidate break.
MIN_SIDE = 2
#: Smallest speed rise over the window that can hold a change of mode [m/s].
#: Common practice, no published source: paddling speed is about 1 m/s, a ride
#: reaches several m/s, so a rise under 0.5 m/s is not a ride's take-off.
MIN_RISE_MPS = 0.5
#: A pause between fixes longer than this (and longer than 4 median intervals) is a
#: dropout [s].
DROPOUT_GAP_S = 3.0
#: The planing slope must be at least this many times the displacement slope.
#: Common practice, no published source.
MIN_SLOPE_RATIO = 1.5
#: Bootstrap replicates.
N_BOOT = 300
#: Most candidate breaks per profile.
MAX_CANDIDATES = 160
#: Two-sided level of the reported intervals.
LEVEL = 0.90
#: Weight of a device-reported speed against the smoothed one when both exist.
#: Doppler speed from a GNSS receiver is a direct measurement with near-independent
#: errors of roughly 0.1-0.2 m/s (from memory; receiver data sheets), so it is used
#: in place of the smoothed speed where it covers the window.
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
) -> OnsetEstimate:
    """Estimate the planing onset (instant and speed, with 90 % intervals) of one ride.

    Parameters
    ----------
    t_s : array_like
        Sample times [s]; irregular spacing allowed, need not be sorted.
    speed_mps : array_like
        Smoothed speed at those times [m/s]; NaN where unknown.
    speed_sd_mps : array_like, optional
        Standard deviation of the smoothed speed [m/s]. Used as a floor for the noise
        level of the bootstrap.
    reported_speed_mps : array_like, optional
        Speed reported by the device [m/s], NaN where absent. Used in place of the
        smoothed speed when it covers at least 80 % of the window's samples.
    window : (float, float), optional
        The ride's catch start and speed peak [s]; default the whole series.
    seed : int
        Seed of the bootstrap; equal inputs and seed give equal results.

    Returns
    -------
    OnsetEstimate
        Numbers and ``reason=None``, or all numbers ``None`` and a reason.

    Notes
    -----
    Two-phase regression with a continuous join (Hudson 1966; Hinkley 1971), profiled
    over candidate breaks; moving-block residual bootstrap (Künsch 1989) for the
    percentile intervals (Efron & Tibshirani 1993, ch. 13).
    """
    try:
        t, y, sd, src = _prepare(t_s, speed_mps, speed_sd_mps, reported_speed_mps, window)
    except _Unusable as exc:
        return _none(exc.code, exc.detail)
    return _estimate_prepared(t, y, sd, src, seed)


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


def _prepare(t_s, speed_mps, speed_sd_mps, reported_speed_mps, window):
    t = _as_1d(t_s, "t_s", None)
    n = len(t)
    v = _as_1d(speed_mps, "speed_mps", n)
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
        keep &= (t >= w0) & (t <= w1)
    t, v, sd, rep = t[keep], v[keep], sd[keep], rep[keep]
    order = np.argsort(t, kind="stable")
    t, v, sd, rep = t[order], v[order], sd[order], rep[order]
    if len(t):
        first = np.concatenate(([True], np.diff(t) > 0))  # drop repeated times
        t, v, sd, rep = t[first], v[first], sd[first], rep[first]
    n_rep = int(np.isfinite(rep).sum())
    if len(t) and n_rep >= REPORTED_MIN_COVERAGE * len(t) and n_rep >= MIN_SAMPLES:
        ok = np.isfinite(rep)
        return t[ok], rep[ok], np.full(int(ok.sum()), np.nan), "reported"
    ok = np.isfinite(v)
    if len(t) and ok.sum() < len(t):
        # fill the smoothed speed's holes with the device speed where present
        fill = ~ok & np.isfinite(rep)
        v = np.where(fill, rep, v)
        ok = np.isfinite(v)
    t, v, sd = t[ok], v[ok], sd[ok]
    if len(t) < MIN_SAMPLES:
        raise _Unusable(REASON_TOO_FEW, f"{len(t)} valid speed samples in the window, need {MIN_SAMPLES}")
    return t, v, sd, "smoothed"


def _estimate_prepared(t: np.ndarray, y: np.ndarray, sd: np.ndarray, src: str, seed: int) -> OnsetEstimate:
    n = len(t)
    dt = np.diff(t)
    dt_med = float(np.median(dt))
    gap_limit = max(DROPOUT_GAP_S, 4.0 * dt_med)

    k = max(1, min(3, n // 4))
    rise = float(np.median(y[-k:]) - np.median(y[:k]))
    if not rise >= MIN_RISE_MPS:
        return _none(REASON_NO_RISE, f"speed rises by {rise:.2f} m/s over the window, need {MIN_RISE_MPS} m/s")

    # time is centred and scaled for numerical conditioning of the normal equations
    t0 = float(t[0])
    span = float(t[-1] - t[0])
    tc = t - t0
    cand = _candidates(tc, MIN_SIDE, MAX_CANDIDATES)
    if len(cand) < 3:
        return _none(REASON_TOO_FEW, f"{n} samples leave no room for a break with {MIN_SIDE} samples each side")

    design = hinge_design(tc, cand)  # (M, n, p)
    gram_inv = _gram_inverse(design)
    if gram_inv is None:
        return _none(REASON_TOO_FEW, "samples too clustered in time to fit two phases")

    rss, coef = _profile(design, gram_inv, y[None, :])  # (M, 1), (M, p, 1)
    tau_c, j = _refine_break(cand, rss)
    j0 = int(j[0])
    beta = coef[j0, :, 0]
    fitted = design[j0] @ beta
    tau = float(tau_c[0])
    onset_speed = float(_interp_at(cand, coef[:, 0, :], tau_c, j)[0])
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

    if not (b2 > 0 and b2 > MIN_SLOPE_RATIO * max(b1, 0.0)):
        return _none(
            REASON_NO_CHANGE,
            f"acceleration {b1:.2f} m/s^2 before and {b2:.2f} m/s^2 after the best break: no take-off",
        )

    # moving-block residual bootstrap
    resid = y - fitted
    p = design.shape[2] + 1  # coefficients plus the break
    scale = np.sqrt(n / max(n - p, 1))
    resid = (resid - resid.mean()) * scale
    floor = float(np.nanmedian(sd)) if np.isfinite(sd).any() else 0.0
    rms = float(np.sqrt(np.mean(resid**2)))
    if rms < floor and rms > 0:
        resid = resid * (floor / rms)
    block = _block_length(resid)
    rng = np.random.default_rng(seed)
    ystar = fitted[None, :] + _block_resample(resid, block, N_BOOT, rng)  # (B, n)
    rss_b, coef_b = _profile(design, gram_inv, ystar)
    tau_b, j_b = _refine_break(cand, rss_b)
    speed_b = _interp_at(cand, coef_b[:, 0, :], tau_b, j_b)
    b1_b = coef_b[j_b, 1, np.arange(N_BOOT)]
    b2_b = coef_b[j_b, 2, np.arange(N_BOOT)]
    took_off = np.mean((b2_b > 0) & (b2_b > MIN_SLOPE_RATIO * np.maximum(b1_b, 0.0)))
    if took_off < 0.5 + LEVEL / 2:
        return _none(
            REASON_NO_CHANGE,
            f"the change of acceleration is not clear: present in {100 * took_off:.0f} % of resamples",
        )

    lo_q, hi_q = (1 - LEVEL) / 2, (1 + LEVEL) / 2
    t_lo, t_hi = np.quantile(tau_b, [lo_q, hi_q])
    v_lo, v_hi = np.quantile(speed_b, [lo_q, hi_q])
    t_lo, t_hi = min(t_lo, tau), max(t_hi, tau)
    v_lo, v_hi = min(v_lo, onset_speed), max(v_hi, onset_speed)
    return OnsetEstimate(
        time_s=tau + t0,
        speed_mps=onset_speed,
        ci_mps=(float(v_lo), float(v_hi)),
        time_ci_s=(float(t_lo) + t0, float(t_hi) + t0),
        reason=None,
    )


# --- pure functions -----------------------------------------------------------------
def hinge_design(t: np.ndarray, breaks: np.ndarray, curved: bool = True) -> np.ndarray:
    """Design matrices of the continuous two-phase model, one per candidate break.

    Parameters
    ----------
    t : ndarray, shape (n,)
        Sample times [s].
    breaks : ndarray, shape (M,)
        Candidate breaks [s].
    curved : bool
        Add the quadratic term of the second phase.

    Returns
    -------
    ndarray, shape (M, n, 3) or (M, n, 4)
        Columns 1, min(t - tau, 0), max(t - tau, 0) and, if curved, max(t - tau, 0)^2;
        so the first coefficient is the value at the break.
    """
    d = t[None, :] - breaks[:, None]
    cols = [np.ones_like(d), np.minimum(d, 0.0), np.maximum(d, 0.0)]
    if curved:
        cols.append(np.maximum(d, 0.0) ** 2)
    return np.stack(cols, axis=2)


def _candidates(t: np.ndarray, min_side: int, max_count: int) -> np.ndarray:
    n = len(t)
    lo, hi = t[min_side - 1], t[n - min_side]
    if not hi > lo:
        return np.empty(0)
    # a grid at least four times finer than the median sampling interval
    step = float(np.median(np.diff(t))) / 4.0
    count = int(np.clip(np.ceil((hi - lo) / max(step, 1e-9)) + 1, 3, max_count))
    grid = np.linspace(lo, hi, count)
    # keep only candidates with min_side samples strictly on each side
    left = np.searchsorted(t, grid, side="left")
    right = n - np.searchsorted(t, grid, side="right")
    return grid[(left >= min_side) & (right >= min_side)]


def _gram_inverse(design: np.ndarray) -> np.ndarray | None:
    gram = np.einsum("mnp,mnq->mpq", design, design)
    # relative conditioning check per candidate
    try:
        cond = np.linalg.cond(gram)
    except np.linalg.LinAlgError:
        return None
    if not np.all(np.isfinite(cond)) or np.max(cond) > 1e12:
        return None
    return np.linalg.inv(gram)


def _profile(design: np.ndarray, gram_inv: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Least-squares fit of every candidate break to every series.

    Parameters
    ----------
    design : (M, n, p); gram_inv : (M, p, p); y : (B, n)

    Returns
    -------
    rss : (M, B) residual sums of squares; coef : (M, p, B) coefficients.
    """
    xty = np.matmul(design.transpose(0, 2, 1), y.T[None, :, :])  # (M, p, B)
    coef = np.matmul(gram_inv, xty)  # (M, p, B)
    rss = np.sum(y * y, axis=1)[None, :] - np.sum(xty * coef, axis=1)
    return rss, coef


def _refine_break(cand: np.ndarray, rss: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Best break per series, refined by a parabola through the grid minimum and neighbours.

    Returns the refined breaks (B,) and the index of the grid minimum (B,).
    """
    m = len(cand)
    j = np.argmin(rss, axis=0)
    jc = np.clip(j, 1, m - 2)
    cols = np.arange(rss.shape[1])
    r0, r1, r2 = rss[jc - 1, cols], rss[jc, cols], rss[jc + 1, cols]
    h = cand[jc + 1] - cand[jc]  # uniform grid
    denom = r0 - 2.0 * r1 + r2
    with np.errstate(divide="ignore", invalid="ignore"):
        shift = np.where(denom > 0, 0.5 * (r0 - r2) / denom, 0.0)
    shift = np.clip(shift, -0.5, 0.5)
    interior = (j > 0) & (j < m - 1)
    tau = np.where(interior, cand[jc] + shift * h, cand[j])
    return tau, j


def _interp_at(cand: np.ndarray, values: np.ndarray, tau: np.ndarray, j: np.ndarray) -> np.ndarray:
    """Linear interpolation of per-candidate values (M, B) at each series' break tau (B,)."""
    m = len(cand)
    cols = np.arange(values.shape[1])
    k = np.clip(np.where(tau >= cand[j], j, j - 1), 0, m - 2)
    w = np.clip((tau - cand[k]) / (cand[k + 1] - cand[k]), 0.0, 1.0)
    return (1 - w) * values[k, cols] + w * values[k + 1, cols]


def _block_length(resid: np.ndarray) -> int:
    """Block length from the residuals' lag-one autocorrelation.

    The block spans about twice the integrated autocorrelation time of an AR(1)
    process, (1 + rho) / (1 - rho), so that blocks keep the serial dependence
    (Künsch 1989 needs blocks growing with the dependence range).
    """
    n = len(resid)
    r = resid - resid.mean()
    den = float(np.dot(r, r))
    rho = float(np.dot(r[:-1], r[1:]) / den) if den > 0 else 0.0
    rho = min(max(rho, 0.0), 0.95)
    iat = (1 + rho) / (1 - rho)
    return int(np.clip(np.ceil(2 * iat), 1, max(1, n // 3)))


def _block_resample(resid: np.ndarray, block: int, n_boot: int, rng: np.random.Generator) -> np.ndarray:
    """Moving-block resamples of a residual series (Künsch 1989), shape (n_boot, n)."""
    n = len(resid)
    n_blocks = -(-n // block)
    starts = rng.integers(0, n - block + 1, size=(n_boot, n_blocks))
    idx = (starts[:, :, None] + np.arange(block)[None, None, :]).reshape(n_boot, -1)[:, :n]
    return resid[idx]
