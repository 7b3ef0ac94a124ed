"""Board comparison engine: statistics against scipy, known built-in differences, rules.

The synthetic libraries come from ``test_compare_synth.make_library`` (invented beach,
riders and boards); each test says which truth it relies on.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from scipy import optimize, stats
from test_compare_synth import BOARDS, Truth, make_library

from sessions import compare as cmp
from sessions.errors import AnalysisError, NotFoundError
from sessions.units import G_N

FAST = cmp.Rules(n_resamples=999)
A, B = "Tern 6'0", "Tern 6'0 v2"


def _two_boards(effect=-0.4, sessions=6, seed=3, **kw):
    plan = {(A, "Marlo"): sessions, (B, "Marlo"): sessions, ("Petrel 6'4", "Ines"): 5,
            ("Skua 5'10", "Bram"): 5, ("Gannet 7'2", "Ottilie"): 4}
    return make_library(plan, board_effect_mps={B: effect}, seed=seed, **kw)


# --- the pooled median used by the session bootstrap ------------------------------------
def test_pooled_median_equals_numpy_median_of_expanded_sample():
    # Independent check: numpy.median of the explicitly rebuilt resample.
    rng = np.random.default_rng(5)
    for _ in range(40):
        k = int(rng.integers(2, 9))
        sizes = rng.integers(1, 7, k)
        codes = np.repeat(np.arange(k), sizes)
        values = rng.normal(size=codes.size).round(1)  # ties on purpose
        order = np.argsort(values, kind="stable")
        draws = rng.integers(0, k, (25, k))
        got = cmp._pooled_median(values[order], codes[order], k, draws)
        want = [np.median(np.concatenate([values[codes == c] for c in row])) for row in draws]
        np.testing.assert_allclose(got, want, rtol=0, atol=1e-12)


# --- intervals against scipy.stats.bootstrap on the same data ----------------------------
def test_difference_ci_with_one_ride_per_session_is_scipys_two_sample_bootstrap():
    # With single-ride sessions and no rescaling the session bootstrap must reproduce
    # scipy.stats.bootstrap's multi-sample percentile interval of median(b) - median(a)
    # exactly (same seed, same resampling order).
    rng = np.random.default_rng(11)
    a, b = rng.normal(4.0, 0.4, 23), rng.normal(3.7, 0.5, 19)
    ca = np.array([f"a{i:03d}" for i in range(a.size)])
    cb = np.array([f"b{i:03d}" for i in range(b.size)])
    rules = cmp.Rules(n_resamples=999, rescale=False)
    est, lo, hi = cmp.cluster_median_difference_ci(a, ca, b, cb, rules, np.random.default_rng(7))
    ref = stats.bootstrap(
        (a, b), lambda x, y, axis: np.median(y, axis=axis) - np.median(x, axis=axis),
        n_resamples=999, method="percentile", vectorized=True, rng=np.random.default_rng(7),
    )
    assert est == pytest.approx(np.median(b) - np.median(a), abs=1e-12)
    assert lo == pytest.approx(ref.confidence_interval.low, abs=1e-12)
    assert hi == pytest.approx(ref.confidence_interval.high, abs=1e-12)


def test_median_ci_with_one_value_per_session_is_scipys_one_sample_bootstrap():
    rng = np.random.default_rng(12)
    x = rng.gamma(3.0, 1.0, 31)
    ids = np.array([f"s{i:03d}" for i in range(x.size)])
    rules = cmp.Rules(n_resamples=999, rescale=False)
    med, lo, hi = cmp.cluster_median_ci(x, ids, rules, np.random.default_rng(3))
    ref = stats.bootstrap((x,), np.median, n_resamples=999, method="percentile", rng=np.random.default_rng(3))
    assert med == pytest.approx(np.median(x))
    assert (lo, hi) == pytest.approx((ref.confidence_interval.low, ref.confidence_interval.high), abs=1e-12)


def test_rescaling_widens_the_interval_by_the_rao_wu_factor():
    # Rao & Wu (1988): deviations scaled by sqrt(k / (k - 1)). With the same seed the
    # rescaled percentile bounds are the plain ones moved away from the estimate by
    # exactly that factor (before clipping to the data range, which does not bind here).
    rng = np.random.default_rng(13)
    x = rng.normal(5.0, 1.0, 40)
    ids = np.repeat(np.arange(8), 5)
    plain = cmp.cluster_median_ci(x, ids, cmp.Rules(n_resamples=999, rescale=False), np.random.default_rng(1))
    wide = cmp.cluster_median_ci(x, ids, cmp.Rules(n_resamples=999), np.random.default_rng(1))
    g = math.sqrt(8 / 7)
    med = plain[0]
    assert wide[1] == pytest.approx(med + g * (plain[1] - med), abs=1e-9)
    assert wide[2] == pytest.approx(med + g * (plain[2] - med), abs=1e-9)


# --- rank test and effect sizes ----------------------------------------------------------
def test_rank_test_matches_scipy_and_pairwise_effect_sizes():
    rng = np.random.default_rng(21)
    a = rng.normal(4.0, 0.5, 17).round(1)
    b = rng.normal(3.6, 0.5, 14).round(1)
    p, r, cl = cmp.rank_test(a, b)
    assert p == pytest.approx(stats.mannwhitneyu(b, a, alternative="two-sided").pvalue, rel=1e-12)
    # McGraw & Wong (1992) common-language effect size, ties counted half, by brute force;
    # Kerby (2014) rank-biserial r = favourable - unfavourable proportion of pairs.
    diff = b[:, None] - a[None, :]
    greater, less, ties = (diff > 0).mean(), (diff < 0).mean(), (diff == 0).mean()
    assert cl == pytest.approx(greater + ties / 2, abs=1e-12)
    assert r == pytest.approx(greater - less, abs=1e-12)


def test_rank_test_of_identical_constant_samples_is_no_evidence():
    assert cmp.rank_test(np.full(5, 4.0), np.full(6, 4.0)) == (1.0, 0.0, 0.5)


# --- OLS against scipy -----------------------------------------------------
def test_ols_matches_scipy_curve_fit_and_linregress():
    rng = np.random.default_rng(31)
    n = 60
    x1, x2 = rng.uniform(1500, 3000, n), rng.uniform(0.3, 0.7, n)
    y = 1.0 + 0.001 * x1 - 0.8 * x2 + rng.normal(0, 0.2, n)
    design = np.column_stack([np.ones(n), x1, x2])
    coef, se, fitted, r2 = cmp.ols(design, y)
    # scipy.optimize.curve_fit with absolute_sigma=False scales pcov by RSS / (n - p),
    # the classical OLS covariance.
    popt, pcov = optimize.curve_fit(lambda X, c0, c1, c2: c0 + c1 * X[0] + c2 * X[1], np.vstack([x1, x2]), y,
                                    p0=[0.0, 0.0, 0.0])
    np.testing.assert_allclose(coef, popt, rtol=1e-6)
    np.testing.assert_allclose(se, np.sqrt(np.diag(pcov)), rtol=1e-5)
    lr = stats.linregress(x1, y)
    c1, se1, _, r2_1 = cmp.ols(np.column_stack([np.ones(n), x1]), y)
    assert c1[1] == pytest.approx(lr.slope, rel=1e-10)
    assert se1[1] == pytest.approx(lr.stderr, rel=1e-8)
    assert se1[0] == pytest.approx(lr.intercept_stderr, rel=1e-8)
    assert r2_1 == pytest.approx(lr.rvalue**2, rel=1e-10)


def test_ols_refuses_collinear_design():
    x = np.arange(10.0)
    with pytest.raises(np.linalg.LinAlgError):
        cmp.ols(np.column_stack([np.ones(10), x, 2 * x]), x)


# --- error rates over seeded replicates ---------------------------------------------------
def _clustered(rng, k, n, shift, sd_session=0.15, sd_ride=0.25):
    codes = np.repeat(np.arange(k), n)
    a = rng.normal(0, sd_session, k)[codes] + rng.normal(0, sd_ride, k * n)
    b = shift + rng.normal(0, sd_session, k)[codes] + rng.normal(0, sd_ride, k * n)
    return a, codes, b, codes.copy()


@pytest.mark.slow
def test_interval_covers_a_known_shift_at_about_the_nominal_rate():
    # Board B's onset is A's shifted by -0.3 m/s (session effects and ride noise alike),
    # so the true difference in medians is -0.3. 200 replicates, 6 sessions x 6 rides.
    rng = np.random.default_rng(2026)
    reps, shift, covered = 200, -0.3, 0
    for _ in range(reps):
        a, ca, b, cb = _clustered(rng, 6, 6, shift)
        _, lo, hi = cmp.cluster_median_difference_ci(a, ca, b, cb, FAST, rng)
        covered += lo <= shift <= hi
    # binomial check of the coverage against the nominal 95 % (scipy.stats.binomtest)
    assert stats.binomtest(covered, reps, 0.95).pvalue > 0.01, covered / reps
    assert covered / reps >= 0.90


@pytest.mark.slow
def test_false_positive_rate_with_no_difference_is_near_alpha():
    # 200 null replicates with day-to-day session effects: the rank test on session
    # medians must reject at about alpha = 0.05, and the verdict (which also needs the
    # interval to exclude 0) may not exceed it by more than sampling error.
    rng = np.random.default_rng(4242)
    reps = 200
    rank_rejects = verdict_rejects = naive_rejects = 0
    for _ in range(reps):
        a, ca, b, cb = _clustered(rng, 6, 6, 0.0)
        _, lo, hi = cmp.cluster_median_difference_ci(a, ca, b, cb, FAST, rng)
        p, _, _ = cmp.rank_test(cmp.cluster_medians(a, ca), cmp.cluster_medians(b, cb))
        rank_rejects += p < 0.05
        verdict_rejects += cmp.verdict(lo, hi, p, True, 0.05) in (cmp.VERDICT_LOWER, cmp.VERDICT_HIGHER)
        naive_rejects += cmp.rank_test(a, b)[0] < 0.05
    assert stats.binomtest(rank_rejects, reps, 0.05).pvalue > 0.01, rank_rejects / reps
    upper = 0.05 + 2.33 * math.sqrt(0.05 * 0.95 / reps)  # one-sided 99 % binomial bound
    assert verdict_rejects / reps <= upper, verdict_rejects / reps
    # Why rides are not treated as independent: the ride-level test rejects far too often.
    assert naive_rejects / reps > upper


# --- the pipeline on synthetic libraries ---------------------------------------------------
def test_built_in_lower_onset_is_found_and_named():
    rides, sessions = _two_boards(effect=-0.45)
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST)
    onset = next(d for d in c.differences if d.metric == "onset_speed_mps")
    # true difference: board effect plus the load term of the different planform areas
    truth = Truth()
    load_a = (78 + 3 + BOARDS[A][2]) * G_N / BOARDS[A][1]
    load_b = (78 + 3 + BOARDS[B][2]) * G_N / BOARDS[B][1]
    true_diff = -0.45 + truth.slope_mps_per_npm2 * (load_b - load_a)
    assert onset.verdict == cmp.VERDICT_LOWER
    assert onset.ci[0] <= true_diff <= onset.ci[1]
    assert onset.estimate < 0 and onset.rank_biserial < 0
    assert (onset.n_a, onset.sessions_a) == (int((rides.board == A).sum()), 6)
    resid = next(d for d in c.differences if d.metric == cmp.RESIDUAL_METRIC)
    assert resid.verdict == cmp.VERDICT_LOWER


def test_too_few_sessions_gives_the_cannot_tell_verdict():
    rides, sessions = _two_boards(sessions=3)  # rules need 4 sessions per board
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST)
    for d in c.differences:
        assert d.verdict == cmp.VERDICT_TOO_FEW, d.metric
        assert math.isnan(d.ci[0]) and math.isnan(d.ci[1])
    doc = cmp.to_jsonable(c)
    text = json.dumps(doc, allow_nan=False)  # strict JSON: NaN became null
    assert doc["differences"][0]["ci"] == [None, None]
    assert "NaN" not in text


def test_too_few_rides_despite_enough_sessions():
    rides, sessions = _two_boards(sessions=5, rides_per_session=1, fixed_rides=True)
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST)
    onset = next(d for d in c.differences if d.metric == "onset_speed_mps")
    assert (onset.n_a, onset.verdict) == (5, cmp.VERDICT_TOO_FEW)  # 5 rides < 8
    rph = next(d for d in c.differences if d.metric == "rides_per_hour")
    assert rph.verdict != cmp.VERDICT_TOO_FEW  # 5 sessions suffice for session metrics


def test_catch_success_and_missed_share():
    s = pd.DataFrame({"rides": [6, 0, 3], "missed_waves": [2, 0, 3]})
    np.testing.assert_allclose(cmp.catch_success(s), [0.75, np.nan, 0.5])
    rides, sessions = _two_boards(missed_rate={B: 0.2, A: 4.0})
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST)
    for summary in c.boards:
        sb = sessions[sessions.board == summary.board]
        assert summary.missed_wave_share == pytest.approx(sb.missed_waves.sum() / (sb.rides + sb.missed_waves).sum())
    catch = next(d for d in c.differences if d.metric == "catch_success")
    assert catch.verdict == cmp.VERDICT_HIGHER


def test_load_fit_recovers_loading_slope_and_board_residual():
    # Truth: onset rises 0.0012 m/s per N/m^2 of planform loading and 0 per litre/kg.
    truth = Truth(session_sd_mps=0.05)
    plan = {(A, "Marlo"): 5, (A, "Ines"): 5, (B, "Marlo"): 5, ("Petrel 6'4", "Ines"): 5,
            ("Petrel 6'4", "Bram"): 5, ("Skua 5'10", "Bram"): 5, ("Gannet 7'2", "Ottilie"): 5,
            ("Skua 5'10", "Ottilie"): 5}
    rides, sessions = make_library(plan, board_effect_mps={B: -0.3}, truth=truth, seed=8)
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST)
    fit = c.load_fit
    assert fit is not None and fit.terms[1:] == cmp.LOAD_TERMS
    k = dict(zip(fit.terms, zip(fit.coef, fit.stderr)))
    slope, se = k["planform_loading_npm2"]
    assert abs(slope - truth.slope_mps_per_npm2) < 4 * se
    wave, wse = k["wave_face_m"]
    assert abs(wave - truth.wave_mps_per_m) < 4 * wse
    m, lo, hi, n = fit.board_residuals[B]
    assert hi < 0 and n == 5  # planes earlier than its load predicts
    assert c.load_fit_note == ""


def test_load_fit_is_skipped_with_too_few_load_points():
    rides, sessions = make_library({(A, "Marlo"): 6, (B, "Marlo"): 6}, seed=2)
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST)
    assert c.load_fit is None and "load fit skipped" in c.load_fit_note
    assert cmp.RESIDUAL_METRIC not in {d.metric for d in c.differences}


def test_load_terms_follow_their_definitions():
    rides, _ = make_library({(A, "Marlo"): 1}, seed=1)
    r = cmp.add_load_terms(rides).iloc[0]
    # planform loading = (body + gear + board mass) * g / area; litres per kg = volume / body mass
    assert r.planform_loading_npm2 == pytest.approx((78 + 3 + 2.8) * 9.80665 / 0.62)
    assert r.litres_per_kg == pytest.approx(30.0 / 78)
    nan_mass = cmp.add_load_terms(rides.assign(board_mass_kg=np.nan)).iloc[0]
    assert math.isnan(nan_mass.planform_loading_npm2)


def test_wave_bands_split_the_onset_comparison():
    rides, sessions = _two_boards(sessions=12, wave_face_m=(0.5, 1.9))
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST)
    assert [d.stratum for d in c.strata] == ["wave 0-1 m", "wave 1-1.5 m", "wave 1.5-2 m", "wave 2+ m"]
    ra = rides[rides.board == A]
    for d, (lo, hi) in zip(c.strata, cmp.DEFAULT_WAVE_BANDS_M):
        assert d.n_a == int(((ra.wave_face_m >= lo) & (ra.wave_face_m < hi)).sum())
    assert c.strata[-1].verdict == cmp.VERDICT_TOO_FEW


def test_selection_filters_riders_dates_and_wave_band():
    rides, sessions = make_library({(A, "Marlo"): 4, (A, "Ines"): 4, (B, "Marlo"): 4}, seed=4)
    sel = cmp.Selection(boards=(A, B), riders=("Marlo",), wave_band_m=(1.0, 2.0),
                        date_from=pd.Timestamp("2026-03-04", tz="UTC"), date_to=pd.Timestamp("2026-03-10", tz="UTC"))
    got = cmp.select_rows(rides, sel, "session_start")
    assert set(got.rider) == {"Marlo"}
    assert got.wave_face_m.between(1.0, 2.0, inclusive="left").all()
    assert (got.session_start >= sel.date_from).all() and (got.session_start < sel.date_to).all()
    want = rides[(rides.rider == "Marlo") & (rides.wave_face_m >= 1) & (rides.wave_face_m < 2)
                 & (rides.session_start >= sel.date_from) & (rides.session_start < sel.date_to)]
    assert len(got) == len(want)


def test_model_band_is_placed_beside_the_measurement():
    rides, sessions = _two_boards()

    def toy_model(board, row):  # a stand-in predictor: band proportional to loading
        loading = (row.rider_body_mass_kg + row.rider_gear_mass_kg + row.board_mass_kg) * G_N / row.planform_area_m2
        return 0.0015 * loading, 0.0020 * loading

    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST, onset_model=toy_model)
    row = c.model_rows[c.model_rows.board == A].iloc[0]
    assert row.model_lo_mps == pytest.approx(0.0015 * row.planform_loading_npm2)
    assert row.measured_median_mps == pytest.approx(rides[rides.board == A].onset_speed_mps.median())
    curve = c.model_curve[c.model_curve.board == B]
    assert len(curve) > 10
    np.testing.assert_allclose(curve.model_hi_mps, 0.0020 * curve.planform_loading_npm2, rtol=1e-9)
    assert c.boards[0].model_onset_band_mps == pytest.approx((row.model_lo_mps, row.model_hi_mps))


def test_board_load_model_uses_the_load_figures():
    from sessions.boards import Board, Outline
    from sessions.load import load_figures
    from sessions.riders import Rider

    board = Board(name=A, length_m=1.83, width_m=0.49, thickness_m=0.062, volume_l=30.0, mass_kg=2.8,
                  outline=Outline.default_for(1.83, 0.49))
    model = cmp.board_load_model({A: board})
    row = pd.Series({"rider_body_mass_kg": 78.0, "rider_gear_mass_kg": 3.0})
    want = load_figures(board, Rider(name="x", body_mass_kg=78.0, gear_mass_kg=3.0), "sea").predicted_onset_mps
    assert model(A, row) == pytest.approx(want)
    assert all(math.isnan(v) for v in model("unknown board", row))
    assert all(math.isnan(v) for v in model(A, pd.Series({"rider_body_mass_kg": 900.0, "rider_gear_mass_kg": 0.0})))
    # a board stored without outline stations gets the default outline for its length and width
    bare = Board(name=A, length_m=1.83, width_m=0.49, thickness_m=0.062, volume_l=30.0, mass_kg=2.8)
    assert cmp.board_load_model({A: bare})(A, row) == pytest.approx(want)
    assert bare.outline is None  # the caller's board is left as it was


def test_json_document_has_the_contract_keys():
    rides, sessions = _two_boards()
    doc = cmp.to_jsonable(cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST))
    json.dumps(doc, allow_nan=False)
    board = doc["boards"][0]
    assert isinstance(board["board"], str) and isinstance(board["rides"], int)
    assert set(board["onset_speed_mps"]) >= {"median", "ci"} and len(board["onset_speed_mps"]["ci"]) == 2
    onsets = rides[rides.board == A].onset_speed_mps
    assert board["onset_speed_mps"]["median"] == pytest.approx(onsets.median())
    assert board["onset_speed_mps"]["quartiles"] == pytest.approx(list(onsets.quantile([0.25, 0.75])))
    assert board["onset_speed_mps"]["n"] == onsets.size
    for d in doc["differences"]:
        assert set(d) >= {"metric", "a", "b", "estimate", "ci", "p_value", "verdict"}
        assert d["verdict"] in cmp.VERDICTS
        assert (d["a"], d["b"]) == (A, B)
    assert "lifeguards" in doc["caution"]


def test_three_boards_compare_each_to_the_first():
    rides, sessions = _two_boards()
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B, "Petrel 6'4")), FAST)
    pairs = {(d.a, d.b) for d in c.differences}
    assert pairs == {(A, B), (A, "Petrel 6'4")}
    # A and B share their rider; Petrel was ridden by someone else: one note, naming both
    assert len(c.notes) == 1 and "Petrel 6'4 by Ines" in c.notes[0] and "--rider" in c.notes[0]


def test_results_are_reproducible_with_the_seed():
    rides, sessions = _two_boards()
    one = cmp.to_jsonable(cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST))
    two = cmp.to_jsonable(cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST))
    assert one == two


# --- bad input -----------------------------------------------------------------------------
def test_bad_input_raises_specific_errors():
    rides, sessions = _two_boards()
    with pytest.raises(NotFoundError, match="Albatross"):
        cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, "Albatross")))
    with pytest.raises(AnalysisError, match="at least two"):
        cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A,)))
    with pytest.raises(AnalysisError, match="only once"):
        cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, A)))
    with pytest.raises(AnalysisError, match="onset_speed_mps"):
        cmp.compare_boards(rides.drop(columns="onset_speed_mps"), sessions, cmp.Selection(boards=(A, B)))
    with pytest.raises(AnalysisError):
        cmp.Rules(alpha=1.5)
    with pytest.raises(AnalysisError):
        cmp.Rules(n_resamples=10)


@pytest.mark.parametrize("text", ["1", "a-b", "2-1", "-1-2", "1-1", "nan-2", "1-inf"])
def test_parse_wave_band_refuses_bad_text(text):
    with pytest.raises(AnalysisError, match="wave band"):
        cmp.parse_wave_band(text)


def test_parse_wave_band_reads_metres():
    assert cmp.parse_wave_band(" 0.8 - 1.5") == (0.8, 1.5)


def test_empty_onsets_do_not_crash():
    rides, sessions = _two_boards()
    c = cmp.compare_boards(rides.assign(onset_speed_mps=np.nan), sessions, cmp.Selection(boards=(A, B)), FAST)
    onset = next(d for d in c.differences if d.metric == "onset_speed_mps")
    assert onset.verdict == cmp.VERDICT_TOO_FEW and onset.n_a == 0
    assert math.isnan(c.boards[0].metrics["onset_speed_mps"].median)


# --- campaign view -------------------------------------------------------------------------
def test_campaign_table_lists_versions_riders_and_feedback():
    rides, sessions = make_library({(A, "Marlo"): 3, (A, "Ines"): 2, (B, "Marlo"): 4, ("Skua 5'10", "Bram"): 2}, seed=6)
    t = cmp.campaign_table(rides, sessions, "Tern")
    assert list(zip(t.board_version, t.rider)) == [("v1", "Ines"), ("v1", "Marlo"), ("v2", "Marlo")]
    row = t[(t.board_version == "v2")].iloc[0]
    sb = sessions[sessions.board == B]
    assert row.sessions == 4 and row.rides == int((rides.board == B).sum())
    assert row.onset_median_mps == pytest.approx(rides[rides.board == B].onset_speed_mps.median())
    assert row.score_speed == pytest.approx(sb.score_speed.mean())
    assert row.catch_success == pytest.approx(sb.rides.sum() / (sb.rides + sb.missed_waves).sum())
    newest = sb.sort_values("start").feedback_note.iloc[-1]
    assert row.feedback.startswith(newest) and row.feedback.count(" | ") == 3
    with pytest.raises(NotFoundError, match="Kittiwake"):
        cmp.campaign_table(rides, sessions, "Kittiwake")


# --- refitted residual intervals -------------------------------------------------------------
def test_refit_mean_residuals_equal_least_squares_on_the_expanded_resample():
    # Independent check: numpy.linalg.lstsq on the rides repeated by their session's draw count.
    rng = np.random.default_rng(41)
    n_sessions, per = 9, 4
    codes = np.repeat(np.arange(n_sessions), per)
    boards = np.where(codes < 3, "x", np.where(codes < 6, "y", "z"))
    x = np.column_stack([np.ones(codes.size), rng.uniform(900, 1600, codes.size), rng.uniform(0.3, 2.0, codes.size)])
    y = 1.0 + 0.001 * x[:, 1] + rng.normal(0, 0.2, codes.size)
    member = np.column_stack([boards == b for b in ("x", "y", "z")]).astype(float)
    counts = rng.integers(0, 3, (5, n_sessions))
    counts[:, [0, 3, 6]] += 1  # every board drawn at least once, as in the stratified bootstrap
    got = cmp._refit_mean_residuals(cmp._standardise(x), y, codes, member, counts)
    for row, c in zip(got, counts):
        reps = c[codes]
        xe, ye, be = np.repeat(x, reps, axis=0), np.repeat(y, reps), np.repeat(boards, reps)
        r = ye - xe @ np.linalg.lstsq(xe, ye, rcond=None)[0]
        np.testing.assert_allclose(row, [r[be == b].mean() for b in ("x", "y", "z")], atol=1e-9)


@pytest.mark.slow
def test_board_residual_interval_covers_zero_when_no_board_differs():
    # Correctly specified truth (onset linear in loading and wave height, no board effect),
    # day-to-day session effects: every board's expected residual is 0. 60 seeded
    # libraries x 6 boards; the interval may be conservative but must not under-cover.
    plan = {(A, "Marlo"): 5, (B, "Marlo"): 5, ("Petrel 6'4", "Ines"): 4, ("Skua 5'10", "Bram"): 4,
            ("Gannet 7'2", "Ottilie"): 4, ("Petrel 6'4", "Bram"): 4}
    hits = []
    for seed in range(60):
        rides, _ = make_library(plan, seed=1000 + seed)
        fit, _, _ = cmp.fit_load_model(cmp.add_load_terms(rides), FAST, np.random.default_rng(seed))
        hits += [lo <= 0 <= hi for _, lo, hi, _ in fit.board_residuals.values()]
    rate = float(np.mean(hits))
    assert rate >= 0.95 - 2.33 * math.sqrt(0.95 * 0.05 / len(hits)), rate


def test_single_session_board_has_no_residual_interval():
    plan = {(A, "Marlo"): 5, (B, "Marlo"): 1, ("Petrel 6'4", "Ines"): 4, ("Skua 5'10", "Bram"): 4,
            ("Gannet 7'2", "Ottilie"): 4}
    rides, _ = make_library(plan, seed=5)
    fit, _, fr = cmp.fit_load_model(cmp.add_load_terms(rides), FAST)
    m, lo, hi, k = fit.board_residuals[B]
    assert k == 1 and math.isnan(lo) and math.isnan(hi)
    assert m == pytest.approx(fr.loc[fr.board == B, cmp.RESIDUAL_METRIC].mean())
    m, lo, hi, k = fit.board_residuals[A]
    assert lo < m < hi and k == 5


# --- recorded alike? ---------------------------------------------------------------------
def test_sampling_kinds():
    # the kinds follow the median interval between fixes: 5 Hz, 1 Hz, battery-saving
    assert cmp.sampling_kind(0.2) == "several fixes a second"
    assert cmp.sampling_kind(1.0) == "a fix every second"
    assert cmp.sampling_kind(3.0).startswith("sparse fixes")
    assert cmp.sampling_kind(float("nan")) is None and cmp.sampling_kind(0.0) is None


def test_note_when_boards_were_recorded_at_different_fix_rates():
    rides, sessions = _two_boards()
    same = sessions.assign(sampling_s=1.0)
    c = cmp.compare_boards(rides, same, cmp.Selection(boards=(A, B)), FAST)
    assert c.notes == ()
    # B's sessions recorded in a battery-saving mode, every other one: half of them sparse
    b_rows = np.flatnonzero((sessions["board"] == B).to_numpy())
    mixed = same.copy()
    mixed.loc[mixed.index[b_rows[::2]], "sampling_s"] = 3.0
    c = cmp.compare_boards(rides, mixed, cmp.Selection(boards=(A, B)), FAST)
    assert len(c.notes) == 1
    k = len(b_rows[::2])
    n = len(b_rows)
    assert f"{A}: {n} of {n} with a fix every second" in c.notes[0]
    assert f"{n - k} of {n} with a fix every second" in c.notes[0] and f"{k} of {n} with sparse fixes" in c.notes[0]
    assert "catch success reads high" in c.notes[0]
    # one sparse session in six is below the threshold (a share gap of 1/6 < 0.25)
    one = same.copy()
    one.loc[one.index[b_rows[0]], "sampling_s"] = 3.0
    assert cmp.compare_boards(rides, one, cmp.Selection(boards=(A, B)), FAST).notes == ()
    # without the column (an older caller) there is no sampling note
    assert cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), FAST).notes == ()
