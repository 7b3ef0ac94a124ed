"""Accuracy, calibration and speed of the planing-onset estimate on simulated sessions.

Run: ``.venv/bin/python benchmarks/bench_onset.py [--sessions 50] [--duration 3600]
[--level-sessions 30]``

Every simulated session (seeds 0..N-1) goes through the whole analysis,
:func:`sessions.analysis.analyse`, which calls :func:`sessions.onset.estimate_onset` once
per detected ride. A detected ride matches a true ride when their [first riding step,
end] intervals overlap (one-to-one, greedy in time order). For the matched rides the
benchmark reports, per sampling scheme and with or without device (Doppler) speed:

* share of rides with an onset, and the reasons of the others;
* median absolute error of the onset speed and of the onset instant, and their medians
  (bias);
* coverage of the 90 % intervals (share of rides whose interval holds the truth) and
  their median width;
* a floor: the median absolute error of the smoothed speed itself, averaged over each
  true catch phase, i.e. the error that no estimate built on that speed can avoid;
* CPU time per call of ``estimate_onset`` (median and 95th percentile).

A second table checks that onsets do not shrink toward the middle: sessions simulated
with the board's onset set to 2.0, 2.5, 3.0, 3.5 and 4.0 m/s (the simulator draws each
ride's onset around it), and per level the median of (estimate - truth); across all
rides the least-squares slope of the estimate on the truth, the Theil-Sen slope (Sen
1968, via ``scipy.stats.theilslopes``; robust to the few gross misfits) and the ratio
of the estimated to the true difference between the medians of the 2.0 and 4.0 levels.
Seeds 0..N-1 here; the settings were chosen on seeds from 1000 on.

``--floor N`` adds a third table for 5 Hz without device speed: the estimator on N
sessions (seeds 1000..) as simulated, with one part of the simulated GNSS error
switched off (the white error; the receiver's velocity error; the slow wander), and
with the receiver's velocity error fixed at 0.05-0.30 m/s per axis, showing which part
of the error sets the accuracy and how it grows with a poorer receiver.

The simulator's truth is the reference; the simulated sessions are invented data.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import stats

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import sessions.onset as onset_module  # noqa: E402
from sessions.analysis import analyse  # noqa: E402
from sessions.conditioning import condition  # noqa: E402
from sessions.simulate import SimConfig, simulate_session  # noqa: E402
from sessions.track import Track, TrackMeta  # noqa: E402

CONFIGS = (
    ("1hz", False),
    ("1hz", True),
    ("5hz", False),
    ("5hz", True),
    ("smart", False),
    ("smart", True),
)


class _Timer:
    """Wraps estimate_onset to record the CPU time of each call."""

    def __init__(self, func):
        self.func = func
        self.times_s: list[float] = []

    def __call__(self, *args, **kwargs):
        a = time.process_time()
        out = self.func(*args, **kwargs)
        self.times_s.append(time.process_time() - a)
        return out


def _t(start: pd.Timestamp, iso: str) -> float:
    return (pd.Timestamp(iso) - start).total_seconds()


LEVELS_MPS = (2.0, 2.5, 3.0, 3.5, 4.0)


def score_session(
    seed: int,
    sampling: str,
    reported: bool,
    duration_s: float,
    board_onset_mps: float | None = None,
    sim_overrides: dict | None = None,
) -> list[dict]:
    """One simulated session through the analysis: one row per true ride."""
    style = "long" if seed % 4 == 3 else "short"
    extra = {} if board_onset_mps is None else {"board_onset_mps": board_onset_mps}
    extra.update(sim_overrides or {})
    sim = simulate_session(
        SimConfig(seed=seed, sampling=sampling, duration_s=duration_s, reported_speed=reported, style=style, **extra)
    )
    track = Track(sim.points.reset_index(drop=True), TrackMeta(source=f"sim-{seed}.gpx", sha256="0" * 64))
    start = track.points["time"].iloc[0]
    result = analyse(track)
    cond = condition(track)
    truth_t = sim.true_motion["t_s"].to_numpy() - _t(pd.Timestamp(sim.truth["start"]), sim.truth["start"])
    truth_v = sim.true_motion["speed_mps"].to_numpy()
    offset = _t(start, sim.truth["start"])  # truth time 0 on the track's clock
    rows = []
    used: set[int] = set()
    for r in sim.truth["rides"]:
        ts, te, tc = _t(start, r["start"]), _t(start, r["end"]), _t(start, r["catch_start"])
        row = {"sampling": sampling, "reported": reported, "seed": seed, "detected": False, "level": board_onset_mps}
        # smoothed-speed floor over the true catch phase
        m = (cond.t_s >= tc) & (cond.t_s <= ts)
        if m.any():
            true_v = np.interp(cond.t_s[m] - offset, truth_t, truth_v)
            row["floor_mps"] = abs(float(np.mean(cond.speed_mps[m] - true_v)))
        for k, d in enumerate(result.rides):
            if k in used or not (d.first_ride_s <= te and d.end_s >= ts):
                continue
            used.add(k)
            row["detected"] = True
            row["found"] = d.onset_speed_mps is not None
            row["reason"] = None if d.onset_reason is None else d.onset_reason.split(":", 1)[0]
            if row["found"]:
                v_true = r["onset_speed_mps"]
                row["speed_err"] = d.onset_speed_mps - v_true
                row["true_speed"] = v_true
                row["est_speed"] = d.onset_speed_mps
                row["time_err"] = d.onset_time_s - ts
                row["cover_speed"] = d.onset_ci_mps[0] <= v_true <= d.onset_ci_mps[1]
                row["cover_time"] = d.onset_time_ci_s[0] <= ts <= d.onset_time_ci_s[1]
                row["ci_width"] = d.onset_ci_mps[1] - d.onset_ci_mps[0]
            break
        rows.append(row)
    return rows


def summarise(df: pd.DataFrame, times_s: dict) -> pd.DataFrame:
    out = []
    for (sampling, reported), g in df.groupby(["sampling", "reported"], sort=False):
        det = g[g["detected"]]
        f = det[det["found"] == True]  # noqa: E712
        reasons = det.loc[det["found"] == False, "reason"].value_counts().to_dict()  # noqa: E712
        t = np.asarray(times_s.get((sampling, reported), [np.nan])) * 1e3
        out.append(
            {
                "sampling": sampling,
                "device speed": "yes" if reported else "no",
                "rides": len(g),
                "detected": len(det),
                "with onset": f"{len(f) / max(len(det), 1):.0%}",
                "|speed err| med [m/s]": round(float(f["speed_err"].abs().median()), 3),
                "speed bias [m/s]": round(float(f["speed_err"].median()), 3),
                "|time err| med [s]": round(float(f["time_err"].abs().median()), 2),
                "time bias [s]": round(float(f["time_err"].median()), 2),
                "cover speed 90%": f"{f['cover_speed'].mean():.0%}",
                "cover time 90%": f"{f['cover_time'].mean():.0%}",
                "CI width med [m/s]": round(float(f["ci_width"].median()), 2),
                "floor [m/s]": round(float(g["floor_mps"].median()), 3),
                "ms/call med": round(float(np.median(t)), 2),
                "ms/call p95": round(float(np.percentile(t, 95)), 2),
                "no onset": ", ".join(f"{k} {v}" for k, v in reasons.items()) or "-",
            }
        )
    return pd.DataFrame(out)


def summarise_levels(df: pd.DataFrame) -> pd.DataFrame:
    """Bias per onset level and slopes of estimate on truth, per configuration."""
    out = []
    for (sampling, reported), g in df.groupby(["sampling", "reported"], sort=False):
        det = g[g["detected"]]
        f = det[det["found"] == True]  # noqa: E712
        row = {"sampling": sampling, "device speed": "yes" if reported else "no", "rides with onset": len(f)}
        for level in LEVELS_MPS:
            row[f"bias @{level:.1f} [m/s]"] = round(float(f.loc[f["level"] == level, "speed_err"].median()), 3)
        x, y = f["true_speed"].to_numpy(float), f["est_speed"].to_numpy(float)
        row["slope LS"] = round(float(np.polyfit(x, y, 1)[0]), 2)
        row["slope Theil-Sen"] = round(float(stats.theilslopes(y, x)[0]), 2)
        lo, hi = f[f["level"] == LEVELS_MPS[0]], f[f["level"] == LEVELS_MPS[-1]]
        true_diff = float(hi["true_speed"].median() - lo["true_speed"].median())
        row["difference kept"] = f"{(hi['est_speed'].median() - lo['est_speed'].median()) / true_diff:.0%}"
        row["|err| med [m/s]"] = round(float(f["speed_err"].abs().median()), 3)
        row["with onset"] = f"{len(f) / max(len(det), 1):.0%}"
        out.append(row)
    return pd.DataFrame(out)


FLOOR_CASES = (
    ("as simulated", {}),
    ("no white error", {"gps_white_m": 0.0}),
    ("no receiver velocity error", {"gps_velocity_sd_mps": 0.0}),
    ("no slow wander", {"gps_sigma_m": 0.0}),
    ("no GNSS error at all", {"gps_white_m": 0.0, "gps_velocity_sd_mps": 0.0, "gps_sigma_m": 0.0}),
    ("receiver velocity error 0.05 m/s", {"gps_velocity_sd_mps": 0.05}),
    ("receiver velocity error 0.10 m/s", {"gps_velocity_sd_mps": 0.10}),
    ("receiver velocity error 0.20 m/s", {"gps_velocity_sd_mps": 0.20}),
    ("receiver velocity error 0.30 m/s", {"gps_velocity_sd_mps": 0.30}),
)


def floor_table(n_sessions: int, duration_s: float) -> pd.DataFrame:
    """5 Hz position-only accuracy with parts of the simulated GNSS error switched off."""
    out = []
    for name, overrides in FLOOR_CASES:
        rows = []
        for seed in range(1000, 1000 + n_sessions):
            rows.extend(score_session(seed, "5hz", False, duration_s, sim_overrides=overrides))
        det = pd.DataFrame(rows)
        f = det[det["found"] == True]  # noqa: E712
        out.append(
            {
                "5 Hz, no device speed": name,
                "rides with onset": len(f),
                "|speed err| med [m/s]": round(float(f["speed_err"].abs().median()), 3),
                "speed bias [m/s]": round(float(f["speed_err"].median()), 3),
                "cover speed 90%": f"{f['cover_speed'].mean():.0%}",
            }
        )
    return pd.DataFrame(out)


def _print(table: pd.DataFrame) -> None:
    with pd.option_context("display.width", 250, "display.max_columns", 30):
        print(table.to_string(index=False))
    try:
        print()
        print(table.to_markdown(index=False))
    except ImportError:
        pass


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sessions", type=int, default=50, help="simulated sessions per configuration")
    ap.add_argument("--duration", type=float, default=3600.0, help="session length [s]")
    ap.add_argument("--configs", default="all", help="comma list like 1hz-no,5hz-yes (default all)")
    ap.add_argument("--level-sessions", type=int, default=30, help="sessions per onset level (0: skip that table)")
    ap.add_argument("--level-duration", type=float, default=1800.0, help="session length for the level table [s]")
    ap.add_argument("--floor", type=int, default=0, help="sessions for the 5 Hz error-part table (0: skip)")
    args = ap.parse_args(argv)
    configs = CONFIGS
    if args.configs != "all":
        want = set(args.configs.split(","))
        configs = tuple(c for c in CONFIGS if f"{c[0]}-{'yes' if c[1] else 'no'}" in want)
    rows = []
    times: dict = {}
    original = onset_module.estimate_onset
    try:
        for sampling, reported in configs:
            timer = _Timer(original)
            onset_module.estimate_onset = timer
            for seed in range(args.sessions):
                rows.extend(score_session(seed, sampling, reported, args.duration))
            times[(sampling, reported)] = timer.times_s
    finally:
        onset_module.estimate_onset = original
    if args.sessions > 0:
        _print(summarise(pd.DataFrame(rows), times))
    if args.level_sessions > 0:
        level_rows = []
        for sampling, reported in configs:
            for level in LEVELS_MPS:
                for seed in range(args.level_sessions):
                    level_rows.extend(score_session(seed, sampling, reported, args.level_duration, level))
        print()
        _print(summarise_levels(pd.DataFrame(level_rows)))
    if args.floor > 0:
        print()
        _print(floor_table(args.floor, args.duration))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
