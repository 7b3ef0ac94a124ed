"""Board comparison: does board B catch waves and plane earlier than board A, beyond noise?

The engine works on the two DataFrames of the session library (one row per ride, one row
per session; see :data:`RIDE_COLUMNS` and :data:`SESSION_COLUMNS`) and never touches a
database, so every figure can be reproduced from synthetic frames.

Layers, top to bottom:

* :func:`compare_boards` and :func:`campaign_table` - the pipeline a command calls;
* small frozen dataclasses that carry results (:class:`Rules`, :class:`MetricSummary`,
  :class:`BoardSummary`, :class:`Difference`, :class:`LoadFit`, :class:`Comparison`);
* pure functions: selection, load terms, the session-resampled (cluster) bootstrap of a
  median and of a difference in medians, the rank test with its effect size, the verdict,
  and an ordinary least-squares fit with standard errors.

Statistical method (see ``docs/compare.md`` for the full notes)
-------------------------------------------------------------
Rides of one session share the day's waves, tide and the rider's form, so they are not
independent. Ride-level metrics (onset speed, duration, distance, peak speed) are therefore
resampled **by session**: each bootstrap replicate draws the board's sessions with
replacement and takes the median of all rides of the drawn sessions. The resampling is done
by :func:`scipy.stats.bootstrap` (percentile method, seeded; multi-sample form for a
difference of two independent boards) on arrays of session indices; each board's
replicate deviation is widened by sqrt(k / (k - 1)) for its k sessions (the rescaling
bootstrap of Rao & Wu 1988), which removes the with-replacement bootstrap's variance
shortfall when there are few sessions. Session-level metrics (rides per hour, catch
success, feedback scores) have one value per session and are resampled the same way.
The rank test is :func:`scipy.stats.mannwhitneyu` (two-sided) on independent units: the
per-session medians for ride-level metrics, the session values otherwise. Its effect
sizes (rank-biserial correlation, common-language effect size) describe the rides
themselves. A difference gets the verdict ``"B lower"`` / ``"B higher"`` only when the
interval excludes zero *and* the rank test is below ``alpha``.

References
----------
Rao, J. N. K. & Wu, C. F. J. (1988). Resampling inference with complex survey data.
*Journal of the American Statistical Association* 83(401), 231-241 (rescaling factor
sqrt(m / (n - 1)) with resample size m = n; cited from memory).
McGraw, K. O. & Wong, S. P. (1992). A common language effect size statistic.
*Psychological Bulletin* 111(2), 361-365.
Kerby, D. S. (2014). The simple difference formula: an approach to teaching
nonparametric correlation. *Comprehensive Psychology* 3, 11.IT.3.1.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from datetime import datetime

import numpy as np
import pandas as pd
from scipy import stats

from sessions.errors import AnalysisError, NotFoundError
from sessions.units import G_N

# --- column names of the library frames (contract with sessions.store) ----------------
RIDE_COLUMNS: tuple[str, ...] = (
    "session_id", "ride_index", "rider", "board", "board_model", "board_version",
    "session_start", "start", "onset_speed_mps", "onset_ci_lo_mps", "onset_ci_hi_mps",
    "duration_s", "distance_m", "peak_speed_mps", "mean_speed_mps", "wave_face_m",
    "period_s", "rider_body_mass_kg", "rider_gear_mass_kg", "board_mass_kg",
    "board_volume_l", "planform_area_m2",
)
SESSION_COLUMNS: tuple[str, ...] = (
    "session_id", "sha256", "rider", "board", "board_model", "board_version", "start",
    "duration_s", "time_paddle_s", "time_wait_s", "time_ride_s", "rides", "missed_waves",
    "rides_per_hour", "wave_face_m", "period_s", "rider_body_mass_kg", "rider_gear_mass_kg",
    "board_mass_kg", "board_volume_l", "planform_area_m2", "score_paddling",
    "score_catching", "score_speed", "score_control", "feedback_note",
)

#: Ride-level metrics: column -> plain label (resampled by session).
RIDE_METRICS: dict[str, str] = {
    "onset_speed_mps": "planing onset speed [m/s]",
    "duration_s": "ride duration [s]",
    "distance_m": "ride distance [m]",
    "peak_speed_mps": "peak speed [m/s]",
}
#: Session-level metrics: column -> plain label (one value per session).
SESSION_METRICS: dict[str, str] = {
    "rides_per_hour": "rides per hour",
    "catch_success": "catch success (rides / (rides + missed waves))",
    "score_paddling": "feedback: paddling",
    "score_catching": "feedback: catching",
    "score_speed": "feedback: speed",
    "score_control": "feedback: control",
}
#: Derived ride-level metric: onset speed minus the load fit's prediction.
RESIDUAL_METRIC = "onset_residual_mps"
RESIDUAL_LABEL = "onset beyond load and wave size [m/s]"

#: Wave-face bands [m] used to stratify the onset comparison (lower bound inclusive).
DEFAULT_WAVE_BANDS_M: tuple[tuple[float, float], ...] = (
    (0.0, 1.0), (1.0, 1.5), (1.5, 2.0), (2.0, math.inf),
)

VERDICT_LOWER = "B lower"
VERDICT_HIGHER = "B higher"
VERDICT_NONE = "no clear difference"
VERDICT_TOO_FEW = "too few data to tell"
VERDICTS = (VERDICT_LOWER, VERDICT_HIGHER, VERDICT_NONE, VERDICT_TOO_FEW)

CAUTION = (
    "Estimates for comparing boards, not safety advice: surf within your ability and "
    "follow local rules and lifeguards."
)


# ======================================================================================
# Result classes
# ======================================================================================
@dataclass(frozen=True)
class Rules:
    """Settings of a comparison; serialisable so they can be stored beside results.

    Minimum-data rules: a ride-level metric is compared only when each board has at least
    ``min_rides`` rides with a value, from at least ``min_sessions`` sessions; a
    session-level metric needs at least ``min_session_values`` sessions per board. Four
    sessions each is the smallest design in which the two-sided rank test on sessions can
    reach p < 0.05 (exact smallest p = 2 / C(8, 4) = 2/70 = 0.029). Below these the verdict
    is ``"too few data to tell"``. ``rescale`` switches the Rao-Wu widening of the
    bootstrap on (default) or off (plain scipy percentile bootstrap). The load fit needs ``min_fit_rides`` rides from at least
    ``min_load_points`` distinct board-and-load combinations.
    """

    alpha: float = 0.05
    confidence: float = 0.95
    n_resamples: int = 9999
    seed: int = 20261201
    min_rides: int = 8
    min_sessions: int = 4
    min_session_values: int = 4
    min_fit_rides: int = 20
    min_load_points: int = 5
    rescale: bool = True

    def __post_init__(self) -> None:
        if not 0.0 < self.alpha < 1.0:
            raise AnalysisError(f"alpha must lie between 0 and 1, got {self.alpha}")
        if not 0.0 < self.confidence < 1.0:
            raise AnalysisError(f"confidence must lie between 0 and 1, got {self.confidence}")
        if self.n_resamples < 99:
            raise AnalysisError(f"use at least 99 bootstrap resamples, got {self.n_resamples}")
        if self.min_rides < 2 or self.min_sessions < 2 or self.min_session_values < 2:
            raise AnalysisError("minimum sample sizes must be at least 2")

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)


@dataclass(frozen=True)
class Selection:
    """Which rides and sessions enter a comparison (all optional except the boards)."""

    boards: tuple[str, ...] = ()
    riders: tuple[str, ...] = ()
    date_from: datetime | None = None  # inclusive, tz-aware UTC
    date_to: datetime | None = None  # exclusive, tz-aware UTC
    wave_band_m: tuple[float, float] | None = None  # [lo, hi) wave face height

    def to_dict(self) -> dict:
        return {
            "boards": list(self.boards),
            "riders": list(self.riders),
            "date_from": None if self.date_from is None else pd.Timestamp(self.date_from).isoformat(),
            "date_to": None if self.date_to is None else pd.Timestamp(self.date_to).isoformat(),
            "wave_band_m": None if self.wave_band_m is None else list(self.wave_band_m),
        }


@dataclass(frozen=True)
class MetricSummary:
    """Median of one metric for one board, with its bootstrap interval."""

    metric: str
    median: float
    ci: tuple[float, float]  # NaN when fewer than two sessions
    n: int  # values (rides or sessions)
    sessions: int
    quartiles: tuple[float, float] = (math.nan, math.nan)  # 25th and 75th percentile of the values


@dataclass(frozen=True)
class BoardSummary:
    board: str
    rides: int
    sessions: int
    riders: tuple[str, ...]
    metrics: dict[str, MetricSummary]
    missed_wave_share: float  # pooled: sum(missed) / sum(rides + missed)
    planform_loading_npm2: float  # median over rides
    litres_per_kg: float  # median over rides
    model_onset_band_mps: tuple[float, float] | None = None  # at the median load


@dataclass(frozen=True)
class Difference:
    """Board B minus board A for one metric."""

    metric: str
    a: str
    b: str
    estimate: float  # median(B) - median(A)
    ci: tuple[float, float]
    p_value: float  # Mann-Whitney U, two-sided
    rank_biserial: float  # P(B > A) - P(B < A), in [-1, 1]
    common_language: float  # P(B > A) + P(B = A) / 2
    n_a: int
    n_b: int
    sessions_a: int
    sessions_b: int
    verdict: str
    unit: str  # "ride" or "session"
    stratum: str = "all"


@dataclass(frozen=True)
class LoadFit:
    """OLS of onset speed on load terms across boards and riders.

    ``coef`` and ``stderr`` follow ``terms``; ``board_residuals`` maps a board to
    (mean residual of its rides, lower, upper, sessions), the interval from
    :func:`refit_residual_intervals`.
    """

    terms: tuple[str, ...]
    coef: tuple[float, ...]
    stderr: tuple[float, ...]
    n_rides: int
    n_load_points: int
    r_squared: float
    residual_sd_mps: float
    board_residuals: dict[str, tuple[float, float, float, int]]


@dataclass(frozen=True)
class Comparison:
    selection: Selection
    rules: Rules
    boards: tuple[BoardSummary, ...]
    differences: tuple[Difference, ...]
    strata: tuple[Difference, ...]
    load_fit: LoadFit | None
    load_fit_note: str
    model_rows: pd.DataFrame  # board, rider, loading, measured median, model band
    model_curve: pd.DataFrame  # board, planform_loading_npm2, lo, hi
    rides: pd.DataFrame = field(repr=False)  # selected rides of the chosen boards (+ load terms)
    fit_rides: pd.DataFrame = field(repr=False)  # rides that entered the load fit
    sessions: pd.DataFrame = field(repr=False)
    notes: tuple[str, ...] = ()  # warnings about the fairness of the comparison
    caution: str = CAUTION


#: ``onset_model(board, row) -> (lo, hi)`` gives the model's onset-speed band [m/s] for the
#: named board and the load in ``row`` (board_volume_l, planform_area_m2,
#: rider_body_mass_kg, rider_gear_mass_kg, board_mass_kg); NaN when the model has none.
OnsetModel = Callable[[str, pd.Series], tuple[float, float]]


# ======================================================================================
# Pipeline
# ======================================================================================
def compare_boards(
    rides: pd.DataFrame,
    sessions: pd.DataFrame,
    selection: Selection,
    rules: Rules | None = None,
    *,
    onset_model: OnsetModel | None = None,
    wave_bands_m: Sequence[tuple[float, float]] = DEFAULT_WAVE_BANDS_M,
) -> Comparison:
    """Compare the boards of ``selection`` on every metric; the first board is A.

    ``rides`` and ``sessions`` may hold other boards too: the load fit uses every board in
    the selected riders, dates and wave band (more boards spread the loads), while
    summaries and differences use only the chosen boards.
    """
    rules = rules or Rules()
    if len(selection.boards) < 2:
        raise AnalysisError("name at least two boards to compare")
    if len(set(selection.boards)) != len(selection.boards):
        raise AnalysisError("each board may be named only once")
    _require_columns(rides, RIDE_COLUMNS, "rides")
    _require_columns(sessions, SESSION_COLUMNS, "sessions")
    known = set(rides["board"].dropna()) | set(sessions["board"].dropna())
    missing = [b for b in selection.boards if b not in known]
    if missing:
        raise NotFoundError(
            f"no board named {', '.join(repr(b) for b in missing)} in the library"
            + (f" (known: {', '.join(sorted(map(str, known)))})" if known else " (the library is empty)")
        )

    anyboard = dataclasses.replace(selection, boards=())
    all_rides = add_load_terms(select_rows(rides, anyboard, "session_start")).reset_index(drop=True)
    all_sessions = select_rows(sessions, anyboard, "start").reset_index(drop=True)
    all_sessions = all_sessions.assign(catch_success=catch_success(all_sessions))

    rng = np.random.default_rng(rules.seed)
    fit, fit_note, fit_rides = fit_load_model(all_rides, rules, rng)
    if fit is not None:
        all_rides = all_rides.assign(**{RESIDUAL_METRIC: fit_rides[RESIDUAL_METRIC].reindex(all_rides.index)})
    else:
        all_rides = all_rides.assign(**{RESIDUAL_METRIC: np.nan})

    chosen = list(selection.boards)
    sel_rides = all_rides[all_rides["board"].isin(chosen)].copy()
    sel_sessions = all_sessions[all_sessions["board"].isin(chosen)].copy()

    ride_metrics = dict(RIDE_METRICS)
    if fit is not None:
        ride_metrics[RESIDUAL_METRIC] = RESIDUAL_LABEL

    model_rows = model_table(sel_rides, onset_model)
    summaries = tuple(
        _board_summary(board, sel_rides, sel_sessions, ride_metrics, rules, rng, model_rows)
        for board in chosen
    )

    diffs: list[Difference] = []
    strata: list[Difference] = []
    ref = chosen[0]
    ra, sa = sel_rides[sel_rides["board"] == ref], sel_sessions[sel_sessions["board"] == ref]
    for other in chosen[1:]:
        rb, sb = sel_rides[sel_rides["board"] == other], sel_sessions[sel_sessions["board"] == other]
        for metric in ride_metrics:
            diffs.append(_ride_difference(metric, ref, other, ra, rb, rules, rng))
        for metric in SESSION_METRICS:
            diffs.append(_session_difference(metric, ref, other, sa, sb, rules, rng))
        for lo, hi in wave_bands_m:
            label = wave_band_label(lo, hi)
            in_a = ra[(ra["wave_face_m"] >= lo) & (ra["wave_face_m"] < hi)]
            in_b = rb[(rb["wave_face_m"] >= lo) & (rb["wave_face_m"] < hi)]
            strata.append(
                _ride_difference("onset_speed_mps", ref, other, in_a, in_b, rules, rng, stratum=label)
            )

    return Comparison(
        selection=selection,
        rules=rules,
        boards=summaries,
        differences=tuple(diffs),
        strata=tuple(strata),
        load_fit=fit,
        load_fit_note=fit_note,
        model_rows=model_rows,
        model_curve=model_curve(sel_rides, onset_model, chosen,
                                loading_range=_finite_range(all_rides["planform_loading_npm2"])),
        rides=sel_rides,
        fit_rides=fit_rides,
        sessions=sel_sessions,
        notes=fairness_notes(summaries, sel_sessions),
    )


#: Kinds of track by their median interval between fixes [s]: upper bounds and names.
SAMPLING_KINDS: tuple[tuple[float, str], ...] = (
    (0.5, "several fixes a second"),
    (1.5, "a fix every second"),
    (math.inf, "sparse fixes (a battery-saving mode)"),
)
#: Share of sessions by which two boards' kinds of track may differ before a note.
SAMPLING_SHARE_GAP = 0.25


def sampling_kind(sampling_s: float) -> str | None:
    """The kind of track (:data:`SAMPLING_KINDS`) of a median fix interval, None if unknown."""
    if sampling_s is None or not math.isfinite(sampling_s) or sampling_s <= 0:
        return None
    return next(name for bound, name in SAMPLING_KINDS if sampling_s <= bound)


def fairness_notes(summaries: Sequence[BoardSummary], sessions: pd.DataFrame | None = None) -> tuple[str, ...]:
    """Plain warnings when the boards were not ridden by the same riders, or recorded alike.

    With a ``sampling_s`` column in ``sessions`` (median interval between fixes), a note
    also names boards whose sessions were recorded at different fix rates: sparse tracks
    find about half the missed waves that tracks with a fix every second find (so their
    catch success reads high) and read low onsets high (``docs/analysis.md``,
    ``docs/onset.md``).
    """
    ref = summaries[0]
    notes = []
    for s in summaries[1:]:
        if set(s.riders) != set(ref.riders):
            notes.append(
                f"{ref.board} was ridden by {', '.join(ref.riders) or 'nobody'} and {s.board} by "
                f"{', '.join(s.riders) or 'nobody'}: raw differences mix board and rider; the "
                "load-adjusted onset corrects for load only. Use --rider to compare like with like."
            )
    if sessions is not None and "sampling_s" in sessions.columns and len(sessions):
        kinds = sessions["sampling_s"].map(sampling_kind)
        counts = {s.board: kinds[sessions["board"] == s.board].value_counts() for s in summaries}

        def share(board: str, kind: str) -> float:
            total = counts[board].sum()
            return float(counts[board].get(kind, 0) / total) if total else 0.0

        def describe(board: str) -> str:
            total = counts[board].sum()
            return ", ".join(f"{n} of {total} with {kind}" for kind, n in counts[board].items()) or "unknown fix rates"

        for s in summaries[1:]:
            gap = max(abs(share(ref.board, kind) - share(s.board, kind)) for _, kind in SAMPLING_KINDS)
            if gap >= SAMPLING_SHARE_GAP:
                notes.append(
                    f"{ref.board}'s sessions were recorded differently from {s.board}'s "
                    f"({ref.board}: {describe(ref.board)}; {s.board}: {describe(s.board)}). Tracks with "
                    "sparse fixes find about half the missed waves, so their catch success reads high, "
                    "and they read low onset speeds high: compare sessions recorded the same way."
                )
    return tuple(notes)


def campaign_table(rides: pd.DataFrame, sessions: pd.DataFrame, model: str) -> pd.DataFrame:
    """One row per board version and rider of one board model: results and feedback.

    Columns: board_model, board_version, board, rider, sessions, rides, onset_median_mps,
    rides_per_hour, catch_success, wave_face_m (median), score_* (means), feedback (notes
    of the sessions, newest first, joined with " | ").
    """
    _require_columns(rides, RIDE_COLUMNS, "rides")
    _require_columns(sessions, SESSION_COLUMNS, "sessions")
    s = sessions[sessions["board_model"] == model]
    r = rides[rides["board_model"] == model]
    if s.empty and r.empty:
        known = sorted(set(sessions["board_model"].dropna()) | set(rides["board_model"].dropna()))
        raise NotFoundError(
            f"no board model named {model!r} in the library"
            + (f" (known: {', '.join(map(str, known))})" if known else "")
        )
    s = s.assign(catch_success=catch_success(s))
    keys = ["board_version", "board", "rider"]
    rows = []
    for key, grp in s.groupby(keys, dropna=False, sort=True):
        ver, board, rider = key
        rr = r[(r["board"] == board) & (r["rider"] == rider)]
        notes = (
            grp.sort_values("start", ascending=False)["feedback_note"].dropna().astype(str).str.strip()
        )
        rows.append({
            "board_model": model,
            "board_version": ver,
            "board": board,
            "rider": rider,
            "sessions": int(grp["session_id"].nunique()),
            "rides": int(len(rr)),
            "onset_median_mps": _nanmedian(rr["onset_speed_mps"]),
            "rides_per_hour": _nanmedian(grp["rides_per_hour"]),
            "catch_success": _pooled_catch(grp),
            "wave_face_m": _nanmedian(grp["wave_face_m"]),
            "score_paddling": _nanmean(grp["score_paddling"]),
            "score_catching": _nanmean(grp["score_catching"]),
            "score_speed": _nanmean(grp["score_speed"]),
            "score_control": _nanmean(grp["score_control"]),
            "feedback": " | ".join(n for n in notes if n),
        })
    return pd.DataFrame(rows)


def _board_summary(board, rides, sessions, ride_metrics, rules, rng, model_rows) -> BoardSummary:
    r = rides[rides["board"] == board]
    s = sessions[sessions["board"] == board]
    metrics: dict[str, MetricSummary] = {}
    for metric in ride_metrics:
        ok = r[metric].notna()
        vals = r.loc[ok, metric].to_numpy(float)
        clusters = r.loc[ok, "session_id"].to_numpy()
        med, lo, hi = cluster_median_ci(vals, clusters, rules, rng)
        metrics[metric] = MetricSummary(metric, med, (lo, hi), int(vals.size), _n_unique(clusters), _quartiles(vals))
    for metric in SESSION_METRICS:
        ok = s[metric].notna()
        vals = s.loc[ok, metric].to_numpy(float)
        ids = s.loc[ok, "session_id"].to_numpy()
        med, lo, hi = cluster_median_ci(vals, ids, rules, rng)
        metrics[metric] = MetricSummary(metric, med, (lo, hi), int(vals.size), _n_unique(ids), _quartiles(vals))
    band = None
    if not model_rows.empty:
        mr = model_rows[model_rows["board"] == board]
        if not mr.empty and mr["model_lo_mps"].notna().any():
            band = (float(np.nanmedian(mr["model_lo_mps"])), float(np.nanmedian(mr["model_hi_mps"])))
    session_ids = set(r["session_id"]) | set(s["session_id"])
    return BoardSummary(
        board=board,
        rides=int(len(r)),
        sessions=len(session_ids),
        riders=tuple(sorted(set(r["rider"].dropna()) | set(s["rider"].dropna()))),
        metrics=metrics,
        missed_wave_share=1.0 - _pooled_catch(s),
        planform_loading_npm2=_nanmedian(r["planform_loading_npm2"]),
        litres_per_kg=_nanmedian(r["litres_per_kg"]),
        model_onset_band_mps=band,
    )


def _ride_difference(metric, a, b, ra, rb, rules, rng, stratum="all") -> Difference:
    va, ca = _values(ra, metric, "session_id")
    vb, cb = _values(rb, metric, "session_id")
    enough = all(
        v.size >= rules.min_rides and _n_unique(c) >= rules.min_sessions for v, c in ((va, ca), (vb, cb))
    )
    return _difference(metric, a, b, va, ca, vb, cb, enough, rules, rng, "ride", stratum)


def _session_difference(metric, a, b, sa, sb, rules, rng) -> Difference:
    va, ca = _values(sa, metric, "session_id")
    vb, cb = _values(sb, metric, "session_id")
    enough = va.size >= rules.min_session_values and vb.size >= rules.min_session_values
    return _difference(metric, a, b, va, ca, vb, cb, enough, rules, rng, "session", "all")


def _difference(metric, a, b, va, ca, vb, cb, enough, rules, rng, unit, stratum) -> Difference:
    nan = math.nan
    if va.size and vb.size:
        est = float(np.median(vb) - np.median(va))
        _, rb_corr, cles = rank_test(va, vb)  # effect sizes describe the rides themselves
        p, _, _ = rank_test(cluster_medians(va, ca), cluster_medians(vb, cb))  # independent units
    else:
        est, p, rb_corr, cles = nan, nan, nan, nan
    lo = hi = nan
    if enough:
        est, lo, hi = cluster_median_difference_ci(va, ca, vb, cb, rules, rng)
    return Difference(
        metric=metric, a=a, b=b, estimate=est, ci=(lo, hi), p_value=p, rank_biserial=rb_corr,
        common_language=cles, n_a=int(va.size), n_b=int(vb.size), sessions_a=_n_unique(ca),
        sessions_b=_n_unique(cb), verdict=verdict(lo, hi, p, enough, rules.alpha), unit=unit,
        stratum=stratum,
    )


# ======================================================================================
# Pure functions: selection and load terms
# ======================================================================================
def select_rows(frame: pd.DataFrame, selection: Selection, time_column: str) -> pd.DataFrame:
    """Rows of ``frame`` matching the boards, riders, date range and wave band."""
    keep = pd.Series(True, index=frame.index)
    if selection.boards:
        keep &= frame["board"].isin(selection.boards)
    if selection.riders:
        keep &= frame["rider"].isin(selection.riders)
    if selection.date_from is not None or selection.date_to is not None:
        times = pd.to_datetime(frame[time_column], utc=True)
        if selection.date_from is not None:
            keep &= times >= pd.Timestamp(selection.date_from)
        if selection.date_to is not None:
            keep &= times < pd.Timestamp(selection.date_to)
    if selection.wave_band_m is not None:
        lo, hi = selection.wave_band_m
        keep &= (frame["wave_face_m"] >= lo) & (frame["wave_face_m"] < hi)
    return frame[keep.to_numpy()].copy()


def parse_wave_band(text: str) -> tuple[float, float]:
    """``"1.0-1.8"`` -> (1.0, 1.8) metres of wave face; lower bound inclusive."""
    parts = text.replace(" ", "").split("-")
    try:
        if len(parts) != 2:
            raise ValueError
        lo, hi = float(parts[0]), float(parts[1])
    except ValueError:
        raise AnalysisError(f"wave band must look like LO-HI in metres (e.g. 0.8-1.5), got {text!r}") from None
    if not (math.isfinite(lo) and math.isfinite(hi)) or lo < 0 or hi <= lo:
        raise AnalysisError(f"wave band needs 0 <= LO < HI, got {text!r}")
    return lo, hi


def wave_band_label(lo: float, hi: float) -> str:
    return f"wave {lo:g}+ m" if math.isinf(hi) else f"wave {lo:g}-{hi:g} m"


def add_load_terms(rides: pd.DataFrame) -> pd.DataFrame:
    """Add ``total_mass_kg``, ``planform_loading_npm2`` and ``litres_per_kg``.

    Total mass = rider body + gear + board mass (a missing gear or board mass leaves the
    total NaN rather than guessing). Planform loading = total weight / planform area
    (W = m g, g = 9.80665 m/s^2, CGPM 1901); litres per kg = board volume / rider body
    mass (the trade's figure; the same definitions as :func:`sessions.load.load_figures`).
    """
    total = rides["rider_body_mass_kg"] + rides["rider_gear_mass_kg"] + rides["board_mass_kg"]
    area = rides["planform_area_m2"].where(rides["planform_area_m2"] > 0)
    mass = total.where(total > 0)
    body = rides["rider_body_mass_kg"].where(rides["rider_body_mass_kg"] > 0)
    return rides.assign(
        total_mass_kg=mass,
        planform_loading_npm2=mass * G_N / area,
        litres_per_kg=rides["board_volume_l"] / body,
    )


def catch_success(sessions: pd.DataFrame) -> pd.Series:
    """Per session: rides / (rides + missed waves); NaN when there were no attempts."""
    attempts = sessions["rides"] + sessions["missed_waves"]
    return (sessions["rides"] / attempts.where(attempts > 0)).astype(float)


# ======================================================================================
# Pure functions: load fit
# ======================================================================================
LOAD_TERMS: tuple[str, ...] = ("planform_loading_npm2", "litres_per_kg", "wave_face_m")


def fit_load_model(
    rides: pd.DataFrame, rules: Rules, rng: np.random.Generator | None = None
) -> tuple[LoadFit | None, str, pd.DataFrame]:
    """Regress onset speed on planform loading, litres per kg and wave face height.

    Returns the fit (or None), a one-line note saying why not, and the rides that entered
    the fit with ``onset_residual_mps`` (measured minus fitted). Each board's mean residual
    gets an interval from :func:`refit_residual_intervals` (sessions resampled within each
    board and the whole fit redone per replicate, so the fit's own uncertainty counts).
    """
    terms = list(LOAD_TERMS)
    use = _complete(rides, ["onset_speed_mps", *terms])
    if len(use) < rules.min_fit_rides:  # wave height often unknown: fit on load alone
        terms = terms[:2]
        use = _complete(rides, ["onset_speed_mps", *terms])
    points = use[["board", "planform_loading_npm2", "litres_per_kg"]].round(6).drop_duplicates()
    n_points = len(points)
    empty = use.assign(**{RESIDUAL_METRIC: np.nan}).iloc[0:0]
    if len(use) < rules.min_fit_rides or n_points < rules.min_load_points:
        return None, (
            f"load fit skipped: {len(use)} rides from {n_points} board-and-load combinations with "
            f"onset, load and wave height (needs {rules.min_fit_rides} rides from "
            f"{rules.min_load_points} combinations)"
        ), empty
    x = use[terms].to_numpy(float)
    design = np.column_stack([np.ones(len(use)), x])
    y = use["onset_speed_mps"].to_numpy(float)
    try:
        coef, stderr, fitted, r2 = ols(design, y)
    except np.linalg.LinAlgError:
        return None, "load fit skipped: the load terms do not vary independently (collinear)", empty
    resid = y - fitted
    use = use.assign(**{RESIDUAL_METRIC: resid})
    per_board = refit_residual_intervals(
        design, y, use["session_id"].to_numpy(), use["board"].astype(str).to_numpy(), rules,
        rng if rng is not None else np.random.default_rng(rules.seed),
    )
    dof = len(y) - design.shape[1]
    return LoadFit(
        terms=("intercept", *terms),
        coef=tuple(map(float, coef)),
        stderr=tuple(map(float, stderr)),
        n_rides=int(len(y)),
        n_load_points=int(n_points),
        r_squared=float(r2),
        residual_sd_mps=float(np.sqrt(resid @ resid / dof)),
        board_residuals=per_board,
    ), "", use


def refit_residual_intervals(
    design: np.ndarray, y: np.ndarray, sessions: np.ndarray, boards: np.ndarray, rules: Rules,
    rng: np.random.Generator,
) -> dict[str, tuple[float, float, float, int]]:
    """Mean residual of each board's rides and its session-resampled, refitted interval.

    Each replicate of :func:`scipy.stats.bootstrap` (multi-sample form, one sample of
    session indices per board) draws every board's sessions with replacement, refits the
    least-squares model on the drawn rides (weighted by draw counts) and takes each board's
    mean residual, so the spread carries both the board's session-to-session variation and
    the uncertainty of the fit. With ``rules.rescale`` the deviation of each board's
    replicate is widened by sqrt(k / (k - 1)) for its k sessions (Rao & Wu 1988). The
    interval is mean +/- t(k - 1) x bootstrap standard error (the standard-error interval of
    Efron & Tibshirani 1993, *An Introduction to the Bootstrap*, ch. 12-13, with Student's
    quantile for few sessions). Boards with one session are kept in every replicate and get
    NaN bounds.

    Returns board -> (mean residual [m/s], lower, upper, sessions).
    """
    design = np.asarray(design, float)
    y = np.asarray(y, float)
    codes, n_sessions = _codes(sessions)
    board_names = sorted(set(map(str, boards)))
    session_board = {}
    for c, b in zip(codes, boards):
        session_board[int(c)] = str(b)
    per_board_sessions = {b: np.array(sorted(c for c, bb in session_board.items() if bb == b)) for b in board_names}
    x = _standardise(design)
    resid0 = y - x @ np.linalg.lstsq(x, y, rcond=None)[0]
    est = {b: float(resid0[boards == b].mean()) for b in board_names}
    out = {b: (est[b], math.nan, math.nan, int(per_board_sessions[b].size)) for b in board_names}
    sampled = [b for b in board_names if per_board_sessions[b].size >= 2]
    if not sampled:
        return out
    fixed = np.concatenate([per_board_sessions[b] for b in board_names if per_board_sessions[b].size < 2] or [[]])
    member = np.column_stack([np.asarray(boards) == b for b in sampled]).astype(float)  # rides x boards
    centre = np.array([est[b] for b in sampled])
    gain = np.array([_rescale_factor(per_board_sessions[b].size, rules) for b in sampled])

    def statistic(*draws, axis=-1):
        draws = [np.moveaxis(d, axis, -1) for d in draws]
        lead = draws[0].shape[:-1]
        flat = np.concatenate([d.reshape(-1, d.shape[-1]) for d in draws], axis=1)
        rows = flat.shape[0]
        offsets = flat.astype(np.int64) + n_sessions * np.arange(rows)[:, None]
        counts = np.bincount(offsets.ravel(), minlength=rows * n_sessions).reshape(rows, n_sessions)
        if fixed.size:
            counts[:, fixed.astype(np.int64)] = 1
        means = _refit_mean_residuals(x, y, codes, member, counts)  # rows x boards
        means = centre + gain * (means - centre)
        return np.moveaxis(means, -1, 0).reshape(len(sampled), *lead)

    res = stats.bootstrap(
        tuple(per_board_sessions[b] for b in sampled), statistic,
        n_resamples=min(rules.n_resamples, _SE_RESAMPLES),
        vectorized=True, confidence_level=rules.confidence, method="percentile", rng=rng,
        batch=_batch(y.size),
    )
    se = np.atleast_1d(res.standard_error)
    for i, b in enumerate(sampled):
        k = int(per_board_sessions[b].size)
        half = float(stats.t.ppf(0.5 + rules.confidence / 2, k - 1) * se[i])
        out[b] = (est[b], est[b] - half, est[b] + half, k)
    return out


#: Resamples for a bootstrap standard error: a few hundred suffice for a standard error
#: (Efron & Tibshirani 1993, section 6.4, from memory); 1999 keeps the third digit steady.
_SE_RESAMPLES = 1999


def _refit_mean_residuals(x, y, ride_codes, member, counts) -> np.ndarray:
    """Weighted least-squares refit per row of session ``counts``; mean residual per board.

    ``x`` (rides x p) design, ``y`` (rides), ``ride_codes`` session code of each ride,
    ``member`` (rides x boards) 0/1, ``counts`` (rows x sessions). Returns rows x boards:
    sum(w r) / sum(w) over each board's rides, r = y - x beta_w, beta_w the weighted LS fit.
    """
    w = counts[:, ride_codes].astype(float)  # rows x rides
    n, p = x.shape
    xx = (x[:, :, None] * x[:, None, :]).reshape(n, p * p)
    xtwx = (w @ xx).reshape(-1, p, p)
    xtwy = w @ (x * y[:, None])
    beta = np.einsum("bpq,bq->bp", np.linalg.pinv(xtwx), xtwy)
    resid = y[None, :] - beta @ x.T
    return ((w * resid) @ member) / (w @ member)


def _standardise(design: np.ndarray) -> np.ndarray:
    """Centre and scale the non-constant columns (same fitted values, better conditioning)."""
    x = design.copy()
    for j in range(x.shape[1]):
        sd = x[:, j].std()
        if sd > 0:
            x[:, j] = (x[:, j] - x[:, j].mean()) / sd
    return x


def _complete(frame: pd.DataFrame, cols: list[str]) -> pd.DataFrame:
    use = frame.dropna(subset=cols)
    return use[np.isfinite(use[cols].to_numpy(float)).all(axis=1)]


def ols(design: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """Ordinary least squares with classical standard errors.

    Returns (coefficients, standard errors, fitted values, R^2). The covariance is
    s^2 (X'X)^-1 with s^2 = RSS / (n - p) (e.g. Greene, *Econometric Analysis*, 7th ed.,
    section 4.3). Raises ``numpy.linalg.LinAlgError`` when X is rank deficient or
    ``n <= p``.
    """
    n, p = design.shape
    if n <= p:
        raise np.linalg.LinAlgError("fewer observations than parameters")
    coef, _, rank, _ = np.linalg.lstsq(design, y, rcond=None)
    if rank < p:
        raise np.linalg.LinAlgError("design matrix is rank deficient")
    fitted = design @ coef
    resid = y - fitted
    s2 = float(resid @ resid) / (n - p)
    cov = s2 * np.linalg.inv(design.T @ design)
    tss = float(((y - y.mean()) ** 2).sum())
    r2 = 1.0 - float(resid @ resid) / tss if tss > 0 else math.nan
    return coef, np.sqrt(np.diag(cov)), fitted, r2


# ======================================================================================
# Pure functions: model prediction beside the measurement
# ======================================================================================
def model_table(rides: pd.DataFrame, onset_model: OnsetModel | None) -> pd.DataFrame:
    """Measured median onset per board and rider load beside the model's onset band."""
    cols = ["board", "rider", "rides", "planform_loading_npm2", "litres_per_kg",
            "measured_median_mps", "model_lo_mps", "model_hi_mps"]
    load_cols = ["board_volume_l", "planform_area_m2", "rider_body_mass_kg", "rider_gear_mass_kg", "board_mass_kg"]
    rows = []
    for (board, rider), grp in rides.groupby(["board", "rider"], sort=True):
        loads = grp[load_cols].median(numeric_only=True)
        lo = hi = math.nan
        if onset_model is not None and loads.notna().all():
            lo, hi = (float(v) for v in onset_model(str(board), loads))
        rows.append({
            "board": board, "rider": rider, "rides": int(len(grp)),
            "planform_loading_npm2": _nanmedian(grp["planform_loading_npm2"]),
            "litres_per_kg": _nanmedian(grp["litres_per_kg"]),
            "measured_median_mps": _nanmedian(grp["onset_speed_mps"]),
            "model_lo_mps": lo, "model_hi_mps": hi,
        })
    return pd.DataFrame(rows, columns=cols)


def model_curve(
    rides: pd.DataFrame, onset_model: OnsetModel | None, boards: Sequence[str], points: int = 25,
    loading_range: tuple[float, float] | None = None,
) -> pd.DataFrame:
    """Model onset band against planform loading for each board, over the observed loads.

    The board is held fixed and the rider's body mass is varied so that the loading spans
    ``loading_range`` [N/m^2] (default: the range seen in ``rides``), widened by 10 % each
    side. Points where the model gives no band are NaN.
    """
    cols = ["board", "planform_loading_npm2", "model_lo_mps", "model_hi_mps"]
    if onset_model is None or rides.empty:
        return pd.DataFrame(columns=cols)
    if loading_range is None or not all(map(math.isfinite, loading_range)):
        loading_range = _finite_range(rides["planform_loading_npm2"])
    if not all(map(math.isfinite, loading_range)):
        return pd.DataFrame(columns=cols)
    lo_pl, hi_pl = loading_range[0] * 0.9, loading_range[1] * 1.1
    rows = []
    for board in boards:
        grp = rides[rides["board"] == board]
        base = grp[["board_volume_l", "planform_area_m2", "rider_gear_mass_kg", "board_mass_kg"]].median()
        if grp.empty or base.isna().any():
            continue
        fixed = float(base["rider_gear_mass_kg"] + base["board_mass_kg"])
        for loading in np.linspace(lo_pl, hi_pl, points):
            body = loading * float(base["planform_area_m2"]) / G_N - fixed
            if body <= 0:
                continue
            row = base.copy()
            row["rider_body_mass_kg"] = body
            lo, hi = onset_model(str(board), row)
            rows.append({"board": board, "planform_loading_npm2": float(loading),
                         "model_lo_mps": float(lo), "model_hi_mps": float(hi)})
    return pd.DataFrame(rows, columns=cols)


def board_load_model(boards: dict, water: str = "sea") -> OnsetModel:
    """An :data:`OnsetModel` from :func:`sessions.load.load_figures` for the given boards.

    ``boards`` maps a board name to a :class:`sessions.boards.Board`. A board without an
    outline but with length and width gets the default outline for them
    (:meth:`sessions.boards.Outline.default_for`). The band is NaN when the board lacks the
    figures the model needs or the rider's load is outside the rider ranges or the model's
    range (Savitsky 1964 validity; see :mod:`sessions.physics.planing`).
    """
    import warnings

    from sessions.boards import Outline
    from sessions.errors import FloatliftError, ModelValidityWarning
    from sessions.load import load_figures
    from sessions.riders import Rider

    boards = dict(boards)
    for name, spec in boards.items():
        if getattr(spec, "outline", None) is None and spec.length_m and spec.width_m:
            boards[name] = dataclasses.replace(spec, outline=Outline.default_for(spec.length_m, spec.width_m))

    def model(board: str, row: pd.Series) -> tuple[float, float]:
        spec = boards.get(board)
        if spec is None:
            return math.nan, math.nan
        try:
            rider = Rider(name="rider", body_mass_kg=float(row["rider_body_mass_kg"]),
                          gear_mass_kg=float(row["rider_gear_mass_kg"]))
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", ModelValidityWarning)
                figures = load_figures(spec, rider, water)
        except (FloatliftError, ValueError):
            return math.nan, math.nan
        band = figures.predicted_onset_mps
        if band is None:
            return math.nan, math.nan
        return float(band[0]), float(band[1])

    return model


# ======================================================================================
# Pure functions: statistics
# ======================================================================================
def verdict(lo: float, hi: float, p_value: float, enough: bool, alpha: float) -> str:
    """Verdict on B - A from its interval and rank-test p-value.

    ``"too few data to tell"`` when the minimum-data rule fails or the interval could not
    be computed; ``"B lower"`` / ``"B higher"`` when the whole interval lies below / above
    zero and ``p_value < alpha``; otherwise ``"no clear difference"``.
    """
    if not enough or not (math.isfinite(lo) and math.isfinite(hi)):
        return VERDICT_TOO_FEW
    significant = math.isfinite(p_value) and p_value < alpha
    if hi < 0 and significant:
        return VERDICT_LOWER
    if lo > 0 and significant:
        return VERDICT_HIGHER
    return VERDICT_NONE


def rank_test(a: np.ndarray, b: np.ndarray) -> tuple[float, float, float]:
    """Two-sided Mann-Whitney U test of B against A and its effect sizes.

    Returns (p-value, rank-biserial correlation, common-language effect size) where
    CL = U_B / (n_A n_B) = P(B > A) + P(B = A)/2 (McGraw & Wong 1992) and
    r = 2 CL - 1 = P(B > A) - P(B < A) (Kerby 2014, "simple difference formula").
    """
    a, b = np.asarray(a, float), np.asarray(b, float)
    if a.size == 0 or b.size == 0:
        return math.nan, math.nan, math.nan
    if np.ptp(np.concatenate([a, b])) == 0:  # all values equal: no evidence either way
        return 1.0, 0.0, 0.5
    res = stats.mannwhitneyu(b, a, alternative="two-sided")
    cles = float(res.statistic) / (a.size * b.size)
    return float(res.pvalue), 2.0 * cles - 1.0, cles


def cluster_median_ci(
    values: np.ndarray, clusters: np.ndarray, rules: Rules, rng: np.random.Generator
) -> tuple[float, float, float]:
    """Median of ``values`` and its percentile bootstrap interval resampling clusters.

    Interval bounds are NaN with fewer than two clusters. With ``rules.rescale`` each
    replicate's deviation from the median is widened by sqrt(k / (k - 1)) (Rao & Wu 1988).
    """
    values = np.asarray(values, float)
    if values.size == 0:
        return math.nan, math.nan, math.nan
    med = float(np.median(values))
    codes, n_clusters = _codes(clusters)
    if n_clusters < 2:
        return med, math.nan, math.nan
    order = np.argsort(values, kind="stable")
    sv, sc = values[order], codes[order]
    g = _rescale_factor(n_clusters, rules)

    def statistic(idx, axis=-1):
        return med + g * (_pooled_median(sv, sc, n_clusters, np.moveaxis(idx, axis, -1)) - med)

    res = stats.bootstrap(
        (np.arange(n_clusters),), statistic, n_resamples=rules.n_resamples, vectorized=True,
        confidence_level=rules.confidence, method="percentile", rng=rng, batch=_batch(values.size),
    )
    # the widening may reach past the data; a median never lies outside them
    lo = max(float(res.confidence_interval.low), float(sv[0]))
    hi = min(float(res.confidence_interval.high), float(sv[-1]))
    return med, lo, hi


def cluster_median_difference_ci(
    va: np.ndarray, ca: np.ndarray, vb: np.ndarray, cb: np.ndarray, rules: Rules,
    rng: np.random.Generator,
) -> tuple[float, float, float]:
    """median(B) - median(A) and its percentile interval from a two-sample cluster bootstrap.

    Uses :func:`scipy.stats.bootstrap` in its multi-sample form on the cluster (session)
    indices of each board: each replicate draws A's sessions and B's sessions with
    replacement, independently, and takes the median of all rides in the drawn sessions.
    With one ride per cluster and ``rules.rescale`` off this is exactly the ordinary
    two-sample bootstrap of the difference in medians. With ``rules.rescale`` on, each
    board's replicate deviation is widened by sqrt(k / (k - 1)) for its k clusters
    (Rao & Wu 1988), so that the bootstrap variance of a mean of k clusters is unbiased.
    """
    va, vb = np.asarray(va, float), np.asarray(vb, float)
    ma, mb = float(np.median(va)), float(np.median(vb))
    est = mb - ma
    code_a, ka = _codes(ca)
    code_b, kb = _codes(cb)
    if ka < 2 or kb < 2:
        return est, math.nan, math.nan
    oa, ob = np.argsort(va, kind="stable"), np.argsort(vb, kind="stable")
    sva, sca, svb, scb = va[oa], code_a[oa], vb[ob], code_b[ob]
    ga, gb = _rescale_factor(ka, rules), _rescale_factor(kb, rules)

    def statistic(ia, ib, axis=-1):
        ia, ib = np.moveaxis(ia, axis, -1), np.moveaxis(ib, axis, -1)
        mb_star = mb + gb * (_pooled_median(svb, scb, kb, ib) - mb)
        ma_star = ma + ga * (_pooled_median(sva, sca, ka, ia) - ma)
        return mb_star - ma_star

    res = stats.bootstrap(
        (np.arange(ka), np.arange(kb)), statistic, n_resamples=rules.n_resamples,
        vectorized=True, confidence_level=rules.confidence, method="percentile", rng=rng,
        batch=_batch(max(va.size, vb.size)),
    )
    # a difference of medians never lies outside [min B - max A, max B - min A]
    lo = max(float(res.confidence_interval.low), float(svb[0] - sva[-1]))
    hi = min(float(res.confidence_interval.high), float(svb[-1] - sva[0]))
    return est, lo, hi


#: Upper bound on resamples x rides held in memory at once by the pooled median (~16 MB).
_MAX_CELLS = 2_000_000


def _batch(n_values: int) -> int:
    """Resamples per batch so the (resamples x rides) weight table stays small."""
    return max(1, _MAX_CELLS // max(n_values, 1))


def _rescale_factor(n_clusters: int, rules: Rules) -> float:
    return math.sqrt(n_clusters / (n_clusters - 1)) if rules.rescale else 1.0


def _pooled_median(sorted_values, sorted_codes, n_clusters, idx) -> np.ndarray:
    """Median of the rides of the drawn clusters, for each row of cluster draws ``idx``.

    ``idx`` has shape (..., k) of cluster codes. Drawing a cluster c times counts each of
    its rides c times, so the pooled sample is ``sorted_values`` weighted by the draw
    counts; the median is read from the cumulative weights and equals ``numpy.median`` of
    the expanded sample (mean of the two middle order statistics when the total is even).
    """
    idx = np.asarray(idx, dtype=np.int64)
    lead = idx.shape[:-1]
    flat = idx.reshape(-1, idx.shape[-1])
    rows = flat.shape[0]
    offsets = flat + n_clusters * np.arange(rows)[:, None]
    counts = np.bincount(offsets.ravel(), minlength=rows * n_clusters).astype(np.int32)
    weights = counts.reshape(rows, n_clusters)[:, sorted_codes]  # (rows, n_values)
    cum = np.cumsum(weights, axis=1, dtype=np.int32)
    total = cum[:, -1]
    k1, k2 = (total - 1) // 2, total // 2
    i1 = np.count_nonzero(cum <= k1[:, None], axis=1)
    i2 = np.count_nonzero(cum <= k2[:, None], axis=1)
    med = 0.5 * (sorted_values[i1] + sorted_values[i2])
    return med.reshape(lead)


def cluster_medians(values: np.ndarray, clusters: np.ndarray) -> np.ndarray:
    """Median of ``values`` within each cluster (session), in sorted cluster order."""
    codes, k = _codes(clusters)
    values = np.asarray(values, float)
    return np.array([np.median(values[codes == c]) for c in range(k)])


def _codes(clusters) -> tuple[np.ndarray, int]:
    uniq, codes = np.unique(np.asarray(clusters).astype(str), return_inverse=True)
    return codes.astype(np.int64), int(uniq.size)


def _values(frame: pd.DataFrame, metric: str, cluster: str) -> tuple[np.ndarray, np.ndarray]:
    ok = frame[metric].notna() & np.isfinite(pd.to_numeric(frame[metric], errors="coerce"))
    return frame.loc[ok, metric].to_numpy(float), frame.loc[ok, cluster].to_numpy()


def _n_unique(values) -> int:
    return int(pd.unique(pd.Series(values, dtype=object)).size) if len(values) else 0


def _quartiles(values: np.ndarray) -> tuple[float, float]:
    if values.size == 0:
        return math.nan, math.nan
    q25, q75 = np.percentile(values, [25, 75])
    return float(q25), float(q75)


def _finite_range(series) -> tuple[float, float]:
    v = pd.to_numeric(pd.Series(series), errors="coerce")
    v = v[np.isfinite(v)]
    return (float(v.min()), float(v.max())) if len(v) else (math.nan, math.nan)


def _nanmedian(series) -> float:
    v = pd.to_numeric(pd.Series(series), errors="coerce").dropna()
    return float(v.median()) if len(v) else math.nan


def _nanmean(series) -> float:
    v = pd.to_numeric(pd.Series(series), errors="coerce").dropna()
    return float(v.mean()) if len(v) else math.nan


def _pooled_catch(sessions: pd.DataFrame) -> float:
    ok = sessions["rides"].notna() & sessions["missed_waves"].notna()
    rides = float(sessions.loc[ok, "rides"].sum())
    attempts = rides + float(sessions.loc[ok, "missed_waves"].sum())
    return rides / attempts if attempts > 0 else math.nan


def _require_columns(frame: pd.DataFrame, columns: Sequence[str], what: str) -> None:
    missing = [c for c in columns if c not in frame.columns]
    if missing:
        raise AnalysisError(f"{what} table lacks column(s): {', '.join(missing)}")


# ======================================================================================
# Text tables (terminal and PDF)
# ======================================================================================
def _fmt(x: float, digits: int = 2) -> str:
    return "-" if x is None or not math.isfinite(x) else f"{x:.{digits}f}"


def _fmt_ci(ci: tuple[float, float], digits: int = 2) -> str:
    lo, hi = ci
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return ""
    return f" [{lo:.{digits}f}, {hi:.{digits}f}]"


def verdict_sentence(d: Difference) -> str:
    """Plain sentence naming the boards, e.g. "Tern v2 lower than Tern v1"."""
    if d.verdict == VERDICT_LOWER:
        return f"{d.b} lower than {d.a}"
    if d.verdict == VERDICT_HIGHER:
        return f"{d.b} higher than {d.a}"
    return d.verdict


def board_table_rows(comparison: Comparison) -> list[list[str]]:
    rows = []
    for s in comparison.boards:
        on = s.metrics["onset_speed_mps"]
        rph = s.metrics["rides_per_hour"]
        cs = s.metrics["catch_success"]
        rows.append([
            s.board, str(s.sessions), str(s.rides),
            _fmt(on.median) + _fmt_ci(on.ci), _fmt(rph.median, 1) + _fmt_ci(rph.ci, 1),
            _fmt(cs.median) + _fmt_ci(cs.ci), _fmt(s.planform_loading_npm2, 0), _fmt(s.litres_per_kg, 2),
            "-" if s.model_onset_band_mps is None else f"{_fmt(s.model_onset_band_mps[0])}-{_fmt(s.model_onset_band_mps[1])}",
        ])
    return rows


BOARD_TABLE_HEADER = ["board", "sessions", "rides", "onset median [m/s]", "rides/h", "catch success",
                      "loading [N/m²]", "L/kg", "model band [m/s]"]
DIFF_TABLE_HEADER = ["metric (B - A)", "A", "B", "estimate [95 % CI]", "p", "rank-biserial", "verdict"]
_LABELS = {**RIDE_METRICS, **SESSION_METRICS, RESIDUAL_METRIC: "onset beyond load and wave [m/s]"}
_LABELS["catch_success"] = "catch success"


def difference_table_rows(comparison: Comparison, metrics: tuple[str, ...] | None = None) -> list[list[str]]:
    rows = []
    for d in comparison.differences:
        if metrics is not None and d.metric not in metrics:
            continue
        rows.append([
            _LABELS.get(d.metric, d.metric), d.a, d.b, _fmt(d.estimate) + _fmt_ci(d.ci),
            _fmt(d.p_value, 3), _fmt(d.rank_biserial), verdict_sentence(d),
        ])
    return rows


def selection_text(comparison: Comparison) -> str:
    sel = comparison.selection
    parts = [f"boards: {', '.join(sel.boards)} (A = {sel.boards[0]})"]
    if sel.riders:
        parts.append(f"riders: {', '.join(sel.riders)}")
    if sel.date_from is not None or sel.date_to is not None:
        lo = "start" if sel.date_from is None else f"{sel.date_from:%Y-%m-%d}"
        hi = "now" if sel.date_to is None else f"before {sel.date_to:%Y-%m-%d %H:%M} UTC"
        parts.append(f"dates: {lo} to {hi}")
    if sel.wave_band_m is not None:
        parts.append(f"wave face {sel.wave_band_m[0]:g}-{sel.wave_band_m[1]:g} m")
    return "; ".join(parts)


def strata_lines(comparison: Comparison) -> list[str]:
    """One line per wave band: onset difference B - A, its interval and verdict."""
    lines = []
    for d in comparison.strata:
        sizes = f"{d.n_a}/{d.n_b} rides, {d.sessions_a}/{d.sessions_b} sessions"
        if d.verdict == VERDICT_TOO_FEW:
            lines.append(f"{d.stratum}, {d.b} - {d.a}: {d.verdict} ({sizes})")
        else:
            lines.append(f"{d.stratum}, {d.b} - {d.a}: {_fmt(d.estimate)}{_fmt_ci(d.ci)} m/s, "
                         f"p {_fmt(d.p_value, 3)}: {verdict_sentence(d)} ({sizes})")
    return lines


# ======================================================================================
# Output helpers (plain Python objects for JSON)
# ======================================================================================
def to_jsonable(comparison: Comparison) -> dict:
    """Plain dict for ``json.dumps(..., allow_nan=False)``: NaN becomes None."""
    def num(x):
        if x is None:
            return None
        x = float(x)
        return x if math.isfinite(x) else None

    def ci(pair):
        return [num(pair[0]), num(pair[1])] if pair is not None else [None, None]

    boards = []
    for s in comparison.boards:
        item = {"board": s.board, "rides": s.rides, "sessions": s.sessions, "riders": list(s.riders)}
        for name, m in s.metrics.items():
            item[name] = {"median": num(m.median), "ci": ci(m.ci), "quartiles": ci(m.quartiles), "n": m.n,
                          "sessions": m.sessions}
        item["missed_wave_share"] = num(s.missed_wave_share)
        item["planform_loading_npm2"] = num(s.planform_loading_npm2)
        item["litres_per_kg"] = num(s.litres_per_kg)
        item["model_onset_band_mps"] = None if s.model_onset_band_mps is None else ci(s.model_onset_band_mps)
        if comparison.load_fit is not None and s.board in comparison.load_fit.board_residuals:
            m, lo, hi, k = comparison.load_fit.board_residuals[s.board]
            item["onset_residual_mean_mps"] = {"mean": num(m), "ci": [num(lo), num(hi)], "sessions": k}
        boards.append(item)

    def diff(d: Difference) -> dict:
        return {
            "metric": d.metric, "a": d.a, "b": d.b, "estimate": num(d.estimate), "ci": ci(d.ci),
            "p_value": num(d.p_value), "rank_biserial": num(d.rank_biserial),
            "common_language": num(d.common_language), "n_a": d.n_a, "n_b": d.n_b,
            "sessions_a": d.sessions_a, "sessions_b": d.sessions_b, "unit": d.unit,
            "stratum": d.stratum, "verdict": d.verdict,
        }

    fit = comparison.load_fit
    load_fit = None
    if fit is not None:
        load_fit = {
            "terms": list(fit.terms), "coef": [num(c) for c in fit.coef],
            "stderr": [num(c) for c in fit.stderr], "n_rides": fit.n_rides,
            "n_load_points": fit.n_load_points, "r_squared": num(fit.r_squared),
            "residual_sd_mps": num(fit.residual_sd_mps),
        }
    model = [
        {k: (num(v) if isinstance(v, float) else v) for k, v in row.items()}
        for row in comparison.model_rows.to_dict(orient="records")
    ]
    return {
        "selection": comparison.selection.to_dict(),
        "rules": comparison.rules.to_dict(),
        "boards": boards,
        "differences": [diff(d) for d in comparison.differences],
        "wave_bands": [diff(d) for d in comparison.strata],
        "load_fit": load_fit,
        "load_fit_note": comparison.load_fit_note or None,
        "notes": list(comparison.notes),
        "model": model,
        "caution": comparison.caution,
    }
