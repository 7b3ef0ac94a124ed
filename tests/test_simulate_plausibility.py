"""Simulated sessions against published time-motion studies of surfing measured with GPS.

Each check compares the truth of a handful of seeded sessions with ranges reported in
peer-reviewed studies; the study is named beside each check. The studies measured
competition heats, training and recreational sessions, so the bounds are the widest of
the reported ranges (or mean +- 2 SD where only a mean and SD were given). "Water time"
excludes the walk on the beach, as the studies timed surfers in the water.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from sessions.simulate import SimConfig, simulate_session

CASES = [
    (seed, style, face)
    for seed in range(4)
    for style, face in (("short", 1.2), ("long", 1.0), ("short", 1.8))
]


@pytest.fixture(scope="module")
def sessions():
    out = []
    for seed, style, face in CASES:
        onset = 3.1 if style == "short" else 2.5
        cfg = SimConfig(seed=seed, duration_s=5400, style=style, wave_face_m=face, board_onset_mps=onset)
        out.append(simulate_session(cfg))
    return out


def _water_s(sim) -> float:
    t = sim.truth["totals"]["time_in_state_s"]
    return t["paddle"] + t["wait"] + t["ride"]


def _share(sim, state: str) -> float:
    return sim.truth["totals"]["time_in_state_s"][state] / _water_s(sim)


def test_riding_share_of_water_time(sessions):
    # Riding 2.5 +- 1.9 % (2-h training, Secomb, Sheppard & Dascombe 2015, Int J Sports
    # Physiol Perform 10(1):17-22); 4 % (2-7 %) in heats (Mendez-Villanueva, Bishop & Hamer
    # 2006, J Strength Cond Res 20(3):477-482); 8 +- 2 % (Farley, Harris & Kilding 2012,
    # J Strength Cond Res 26(7):1887-1896); 8.1 % recreational (Barlow et al. 2014,
    # J Strength Cond Res 28(10):2946-2953). Each session within Secomb's mean - 1 SD
    # (0.6 %) and Farley's mean + 1 SD (10 %); the average over sessions between the
    # training mean (2.5 %) and the recreational mean (8.1 %).
    shares = [_share(sim, "ride") for sim in sessions]
    for sim, share in zip(sessions, shares):
        assert 0.006 <= share <= 0.10, sim.config
    assert 0.025 <= np.mean(shares) <= 0.081


def test_paddling_and_stationary_shares(sessions):
    # Paddling 51 % (25-70 %) and stationary 42 % (23-72 %) of heat time
    # (Mendez-Villanueva et al. 2006, J Strength Cond Res 20(3):477-482).
    for sim in sessions:
        assert 0.25 <= _share(sim, "paddle") <= 0.70, sim.config
        assert 0.23 <= _share(sim, "wait") <= 0.72, sim.config
    # Averages over sessions near the training/recreational means: paddling 42.6 +- 9.9 %,
    # stationary 52.8 +- 12.4 % (Secomb et al. 2015, Int J Sports Physiol Perform
    # 10(1):17-22); paddling 47.0 %, waiting 41.6 % (Barlow et al. 2014).
    paddle = np.mean([_share(s, "paddle") for s in sessions])
    wait = np.mean([_share(s, "wait") for s in sessions])
    assert 0.327 <= paddle <= 0.525
    assert 0.404 <= wait <= 0.652


def test_paddling_for_waves_share(sessions):
    # Paddling for a wave 4 +- 1.5 % of heat time (Farley et al. 2012, J Strength Cond
    # Res 26(7):1887-1896): mean +- 2 SD = 1-7 %. Here: sprint and catch before each ride,
    # plus every missed wave.
    for sim in sessions:
        tr = sim.truth
        t = lambda s: pd.Timestamp(s)  # noqa: E731
        s = sum((t(r["start"]) - t(r["paddle_start"])).total_seconds() for r in tr["rides"])
        s += sum((t(m["end"]) - t(m["start"])).total_seconds() for m in tr["missed_waves"])
        assert 0.01 <= s / _water_s(sim) <= 0.07, sim.config


def test_ride_durations(sessions):
    # Ride bouts 11.6 s on average, range 1-44 s (Mendez-Villanueva et al. 2006,
    # J Strength Cond Res 20(3):477-482); a bound of 45 s leaves room for rounding.
    durations = np.array([r["duration_s"] for s in sessions for r in s.truth["rides"]])
    assert durations.min() >= 1.0 and durations.max() <= 45.0
    assert 7.0 <= durations.mean() <= 16.0  # around the published mean of 11.6 s


def test_peak_ride_speeds(sessions):
    # Highest speed 45 km/h = 12.5 m/s, mean session maximum 33.4 +- 6.5 km/h
    # = 9.28 +- 1.81 m/s (Farley et al. 2012, J Strength Cond Res 26(7):1887-1896);
    # board speeds 5-10 m/s from an instrumented board (Paine 1974, BE thesis, Univ. of
    # Sydney). Shortboard sessions in 1.2-1.8 m faces: every ride peak 5-12.5 m/s.
    for sim in sessions:
        peaks = [r["peak_speed_mps"] for r in sim.truth["rides"]]
        assert max(peaks) <= 12.5
        assert 9.28 - 2 * 1.81 <= max(peaks) <= 12.5 or sim.config.style == "long"
        if sim.config.style == "short":
            assert min(peaks) >= 5.0, sim.config
    # Longboard trim in 1 m faces is slower but still above paddling: 4-10 m/s
    for sim in sessions:
        if sim.config.style == "long":
            assert all(4.0 <= r["peak_speed_mps"] <= 10.0 for r in sim.truth["rides"])


def test_rides_per_hour(sessions):
    # 5 (2-8) rides per 20-min heat (Mendez-Villanueva et al. 2006) = 6-24 per hour.
    for sim in sessions:
        per_h = len(sim.truth["rides"]) / (_water_s(sim) / 3600.0)
        assert 6.0 <= per_h <= 24.0, sim.config


def test_session_mean_speed(sessions):
    # Mean speed over a 2-h training session 52.4 +- 15.2 m/min = 0.873 +- 0.253 m/s
    # (Secomb et al. 2015, Int J Sports Physiol Perform 10(1):17-22); 3.7 +- 0.6 km/h
    # = 1.03 +- 0.17 m/s in heats (Farley et al. 2012). Bound: Secomb mean +- 2 SD.
    for sim in sessions:
        assert 0.873 - 2 * 0.253 <= sim.truth["totals"]["mean_speed_mps"] <= 0.873 + 2 * 0.253
    # Distance 6,293 +- 1,826 m in 2 h (Secomb et al. 2015): per 90 min, mean +- 2 SD
    for sim in sessions:
        per_2h = sim.truth["totals"]["distance_m"] / sim.truth["totals"]["duration_s"] * 7200.0
        assert 6293 - 2 * 1826 <= per_2h <= 6293 + 2 * 1826
