"""Accuracy, calibration and speed of the planing-onset estimate on simulated sessions.

Run: ``.venv/bin/python benchmarks/bench_onset.py [--sessions 50] [--duration 3600]``

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

The simulator's truth is the reference; the simulated sessions are invented data.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

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


def score_session(seed: int, sampling: str, reported: bool, duration_s: float) -> list[dict]:
    """One simulated session through the analysis: one row per true ride."""
    style = "long" if seed % 4 == 3 else "short"
    sim = simulate_session(SimConfig(seed=seed, sampling=sampling, duration_s=duration_s, reported_speed=reported, style=style))
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
        row = {"sampling": sampling, "reported": reported, "seed": seed, "detected": False}
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


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sessions", type=int, default=50, help="simulated sessions per configuration")
    ap.add_argument("--duration", type=float, default=3600.0, help="session length [s]")
    ap.add_argument("--configs", default="all", help="comma list like 1hz-no,5hz-yes (default all)")
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
    table = summarise(pd.DataFrame(rows), times)
    with pd.option_context("display.width", 250, "display.max_columns", 30):
        print(table.to_string(index=False))
    try:
        print()
        print(table.to_markdown(index=False))
    except ImportError:
        pass
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
