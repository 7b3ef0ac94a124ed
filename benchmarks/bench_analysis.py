"""Accuracy and speed of the session analysis against simulated sessions with known truth.

Run: ``.venv/bin/python benchmarks/bench_analysis.py [--sessions 60] [--duration 3600]``

For every simulated session (seeds 0..N-1, sampling modes 1 Hz, 5 Hz and "smart" in
turn, half of them with device speed, both riding styles) it compares the analysis with
the simulator's truth:

* ride detection: a detected ride matches a true ride when their [first riding step, end]
  intervals overlap (one-to-one, greedy in time order); precision, recall, F1;
* ride start error: detected start (the planing onset when found, else the first riding
  step) minus the true start (the onset instant); ride end error likewise;
* per-second state accuracy over the truth's whole seconds;
* missed-wave count error.

It also times ``analyse`` on a 4-hour 1 Hz track and compares it with ``gpxpy.parse`` of
the same track written as GPX.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from sessions.analysis import analyse  # noqa: E402
from sessions.track import Track, TrackMeta  # noqa: E402


def sim_track(seed: int, sampling: str, duration_s: float, reported: bool, style: str):
    from sessions.simulate import SimConfig, simulate_session

    sim = simulate_session(SimConfig(seed=seed, sampling=sampling, duration_s=duration_s, reported_speed=reported, style=style))
    track = Track(sim.points.reset_index(drop=True), TrackMeta(source=f"sim-{seed}.gpx", sha256="0" * 64))
    return sim, track


def _t(truth_start: pd.Timestamp, iso: str) -> float:
    return (pd.Timestamp(iso) - truth_start).total_seconds()


def compare(result, truth: dict, track_start: pd.Timestamp) -> dict:
    """Match rides and score states; times in seconds since the track's first fix."""
    true_rides = [(_t(track_start, r["start"]), _t(track_start, r["end"]), _t(track_start, r["catch_start"])) for r in truth["rides"]]
    det = [(r.first_ride_s, r.end_s, r.start_s, r.catch_start_s) for r in result.rides]
    used = set()
    start_err, end_err, first_err, catch_err = [], [], [], []
    tp = 0
    for ts, te, tc in true_rides:
        for k, (ds, de, dstart, dcatch) in enumerate(det):
            if k in used:
                continue
            if ds <= te and de >= ts:
                used.add(k)
                tp += 1
                start_err.append(dstart - ts)
                first_err.append(ds - ts)
                end_err.append(de - te)
                catch_err.append(dcatch - tc)
                break
    # per-second states
    t0 = _t(track_start, truth["start"]) if "start" in truth else 0.0
    sec = np.asarray(truth["seconds"])
    grid = result.samples
    gt = grid["t_s"].to_numpy()
    gs = grid["state"].astype(str).to_numpy()
    want = t0 + np.arange(len(sec))
    j = np.searchsorted(gt, want - 1e-6)
    ok = (j < len(gt)) & (np.abs(gt[np.minimum(j, len(gt) - 1)] - want) < 0.5)
    got = np.where(ok, gs[np.minimum(j, len(gt) - 1)], "none")
    acc = float(np.mean(got == sec))
    return {
        "true": len(true_rides),
        "det": len(det),
        "tp": tp,
        "start_err": start_err,
        "first_err": first_err,
        "end_err": end_err,
        "catch_err": catch_err,
        "acc": acc,
        "peak_err": [r.peak_speed_mps - truth["rides"][k]["peak_speed_mps"] for k, r in _matched(result, truth, track_start)],
        "dist_rel_err": [r.distance_m / truth["rides"][k]["distance_m"] - 1.0 for k, r in _matched(result, truth, track_start) if truth["rides"][k]["distance_m"] > 0],
        "onsets": sum(r.onset_speed_mps is not None for r in result.rides),
        "onset_err": [r.onset_speed_mps - truth["rides"][k]["onset_speed_mps"] for k, r in _matched(result, truth, track_start) if r.onset_speed_mps is not None],
        "missed_tp": _match_intervals(
            [(_t(track_start, m["start"]), _t(track_start, m["end"])) for m in truth.get("missed_waves", [])],
            list(result.missed_waves),
            slack_s=2.0,
        ),
        "missed_true": len(truth.get("missed_waves", [])),
        "missed_det": len(result.missed_waves),
        "confusion": pd.crosstab(pd.Series(sec, name="truth"), pd.Series(got, name="analysis")),
    }


def _match_intervals(true, found, slack_s: float = 0.0) -> int:
    """Number of one-to-one matches between overlapping intervals (greedy in time)."""
    used = set()
    hits = 0
    for a, b in true:
        for j, (c, d) in enumerate(found):
            if j not in used and c <= b + slack_s and d >= a - slack_s:
                used.add(j)
                hits += 1
                break
    return hits


def _matched(result, truth, track_start):
    """(true index, detected ride) pairs, matched as in :func:`compare`."""
    used, out = set(), []
    for k, r in enumerate(truth["rides"]):
        ts, te = _t(track_start, r["start"]), _t(track_start, r["end"])
        for j, d in enumerate(result.rides):
            if j not in used and d.first_ride_s <= te and d.end_s >= ts:
                used.add(j)
                out.append((k, d))
                break
    return out


def run_accuracy(n: int, duration_s: float, verbose: bool = False, settings=None) -> pd.DataFrame:
    rows = []
    modes = ("1hz", "5hz", "smart")
    for seed in range(n):
        sampling = modes[seed % 3]
        reported = (seed // 3) % 2 == 1
        style = "long" if seed % 4 == 3 else "short"
        sim, track = sim_track(seed, sampling, duration_s, reported, style)
        res = analyse(track, settings=settings)
        c = compare(res, sim.truth, track.start)
        c.update(seed=seed, sampling=sampling, reported=reported)
        if verbose:
            print(seed, sampling, reported, c["true"], c["det"], c["tp"], round(c["acc"], 3), c["missed_true"], c["missed_det"], flush=True)
        rows.append(c)
    return pd.DataFrame(rows)


def summarise(df: pd.DataFrame) -> pd.DataFrame:
    out = []
    for name, g in list(df.groupby("sampling")) + [("all", df)]:
        tp, det, true = g["tp"].sum(), g["det"].sum(), g["true"].sum()
        prec = tp / det if det else float("nan")
        rec = tp / true if true else float("nan")
        f1 = 2 * prec * rec / (prec + rec) if prec + rec > 0 else 0.0

        def med_abs(col):
            vals = np.concatenate([np.asarray(v, dtype=float) for v in g[col]]) if len(g) else np.zeros(0)
            return float(np.median(np.abs(vals))) if len(vals) else float("nan")

        out.append(
            {
                "sampling": name,
                "sessions": len(g),
                "true_rides": int(true),
                "detected": int(det),
                "precision": prec,
                "recall": rec,
                "F1": f1,
                "start_mae_s": med_abs("start_err"),
                "first_ride_mae_s": med_abs("first_err"),
                "end_mae_s": med_abs("end_err"),
                "catch_mae_s": med_abs("catch_err"),
                "state_acc": float(g["acc"].mean()),
                "state_acc_min": float(g["acc"].min()),
                "peak_mae_mps": med_abs("peak_err"),
                "dist_mae_rel": med_abs("dist_rel_err"),
                "onset_found": g["onsets"].sum() / det if det else float("nan"),
                "onset_mae_mps": med_abs("onset_err"),
                "missed_true": int(g["missed_true"].sum()),
                "missed_det": int(g["missed_det"].sum()),
                "missed_recall": g["missed_tp"].sum() / max(g["missed_true"].sum(), 1),
                "missed_precision": g["missed_tp"].sum() / max(g["missed_det"].sum(), 1),
            }
        )
    return pd.DataFrame(out)


def run_speed() -> dict:
    import gpxpy

    from sessions.gpx_write import write_gpx

    from sessions.analysis import AnalysisSettings
    from sessions.rides import RideSettings

    sim, track = sim_track(1, "1hz", 4 * 3600.0, False, "short")
    times, own = [], []
    no_onset = AnalysisSettings(rides=RideSettings(use_onset=False))
    for _ in range(5):
        t0 = time.perf_counter()
        analyse(track)
        times.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        analyse(track, settings=no_onset)
        own.append(time.perf_counter() - t0)
    data = write_gpx(track.points)
    text = data.decode("utf-8") if isinstance(data, bytes) else data
    ptimes = []
    for _ in range(3):
        t0 = time.perf_counter()
        gpxpy.parse(text)
        ptimes.append(time.perf_counter() - t0)
    return {
        "points": track.n_points,
        "analyse_s": float(np.median(times)),
        "analyse_without_onset_s": float(np.median(own)),
        "gpxpy_parse_s": float(np.median(ptimes)),
    }


def run_foreign() -> list[tuple[str, str]]:
    """Analyse every GPX file in the shared folder of other programs' files (if present)."""
    import warnings

    from sessions.analysis import analyse_file
    from sessions.errors import FloatliftError

    folder = Path(__file__).resolve().parent.parent.parent / "shared" / "foreign_gpx"
    out = []
    for path in sorted(folder.glob("*.gpx")):
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                res = analyse_file(path)
            out.append((path.name, f"{res.metrics.rides} rides, {res.track.n_points} fixes"))
        except FloatliftError as exc:
            out.append((path.name, f"refused: {type(exc).__name__}"))
        except Exception as exc:  # noqa: BLE001 - the benchmark reports crashes, it does not stop
            out.append((path.name, f"CRASH {type(exc).__name__}: {exc}"))
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sessions", type=int, default=60)
    ap.add_argument("--duration", type=float, default=3600.0)
    ap.add_argument("--no-speed", action="store_true")
    ap.add_argument("-v", "--verbose", action="store_true")
    args = ap.parse_args(argv)
    df = run_accuracy(args.sessions, args.duration, args.verbose)
    with pd.option_context("display.width", 200, "display.max_columns", 30, "display.precision", 3):
        print(summarise(df).to_string(index=False))
        conf = None
        for c in df["confusion"]:
            conf = c if conf is None else conf.add(c, fill_value=0)
        if conf is not None:
            print("\nper-second confusion (rows truth, columns analysis):")
            print(conf.fillna(0).astype(int).to_string())
    foreign = run_foreign()
    if foreign:
        print("\nGPX files from other programs (none is a surf session):")
        for name, what in foreign:
            print(f"  {name:48s} {what}")
    if not args.no_speed:
        sp = run_speed()
        print(
            f"\n4-hour 1 Hz track ({sp['points']} fixes): analyse {sp['analyse_s']:.3f} s "
            f"(without the onset estimator {sp['analyse_without_onset_s']:.3f} s), gpxpy.parse {sp['gpxpy_parse_s']:.3f} s"
        )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
