"""floatlift performance, measured side by side in one run (issue 11).

Run::

    .venv/bin/python benchmarks/run_all.py --quick     # 1-3 minutes
    .venv/bin/python benchmarks/run_all.py             # full: 500 sessions, 5 repeats (about 10 min)
    .venv/bin/python benchmarks/run_all.py --only read,analysis,memory

Every input is generated here with the simulator (``sessions.simulate``): an invented
beach, invented riders. Candidates are run alternately (A, B, A, B, ...) so that a change
in the machine's load hits both; the table reports medians.

Clocks. The machine is shared, so in-process comparisons use CPU time
(``time.process_time``: every thread of this process) and report wall time beside it. The
import comparison is about using two cores, so its ratio is a wall-time ratio; the CPU time
of the command and its workers (``resource.getrusage``) is printed beside it, with a
CPU-only estimate of the speed-up that the load of other programs cannot disturb. Peak
memory is the ``ru_maxrss`` of a fresh child process. Dashboard pages are timed with
``streamlit.testing.v1.AppTest`` (wall time, CPU time beside it).

Targets (PASS/FAIL in the last table):

* reading: ``read_gpx`` >= 3x faster than ``gpxpy.parse`` (standard-library XML back end)
  on a 4 h 1 Hz file (14,400 points) and a 5 h 5 Hz file (90,000 points), same points;
* whole analysis of the 4 h file (read, condition, states, rides, onsets, metrics and the
  JSON document) faster than ``gpxpy.parse`` alone;
* peak memory of a process that reads and analyses the 5 h 5 Hz file < 250 MB;
* ``floatlift import --jobs 2`` >= 1.7x faster than ``--jobs 1`` on 500 sessions, with
  identical results;
* the board comparison page of a 500-session library renders in < 1 s once cached.

The exit status is 0 when every target is met, 1 otherwise.
"""

from __future__ import annotations

import argparse
import contextlib
import gc
import json
import os
import platform
import resource
import shutil
import sqlite3
import statistics
import subprocess
import sys
import tempfile
import time
import warnings
import xml.etree.ElementTree as StdlibET
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from sessions.gpx import read_gpx  # noqa: E402
from sessions.gpx_write import write_gpx  # noqa: E402

PARTS = ("read", "analysis", "memory", "scaling", "import", "dashboard")
READ_RATIO_TARGET = 3.0
IMPORT_RATIO_TARGET = 1.7
MEMORY_TARGET_MB = 250.0
PAGE_TARGET_S = 1.0


# --- inputs -------------------------------------------------------------------------------------
def simulated_points(hours: float, rate_hz: float, seed: int = 11) -> pd.DataFrame:
    """Fixes of ``hours`` of surfing at ``rate_hz``: exactly ``hours * 3600 * rate_hz`` points.

    The simulator makes sessions of up to 6 h; longer days are sessions back to back (the
    next starts one sampling interval after the last fix of the one before, on the same
    beach). Dropouts are off so that the number of points is exact; device speed and
    elevation are on (the reader parses every value a watch writes).
    """
    from sessions.simulate import SimConfig, simulate_session

    want = int(round(hours * 3600 * rate_hz))
    sampling = {1.0: "1hz", 5.0: "5hz"}[float(rate_hz)]
    parts, have, k = [], 0, 0
    while have < want:
        left_s = (want - have) / rate_hz
        dur = min(6 * 3600.0, max(300.0, left_s + 120.0))
        sim = simulate_session(SimConfig(seed=seed + k, sampling=sampling, duration_s=dur, reported_speed=True,
                                         elevation=True, dropouts=False))
        pts = sim.points.reset_index(drop=True)
        if parts:
            shift = parts[-1]["time"].iloc[-1] + pd.Timedelta(seconds=1.0 / rate_hz) - pts["time"].iloc[0]
            pts["time"] = pts["time"] + shift
        parts.append(pts)
        have += len(pts)
        k += 1
    pts = pd.concat(parts, ignore_index=True).iloc[:want].copy()
    pts["segment"] = np.zeros(len(pts), dtype=np.int32)
    return pts


def write_track(folder: Path, hours: float, rate_hz: float, seed: int = 11) -> Path:
    path = folder / f"day_{hours:g}h_{rate_hz:g}hz.gpx"
    if not path.exists():
        write_gpx(simulated_points(hours, rate_hz, seed), path)
    return path


# --- clocks -------------------------------------------------------------------------------------
@contextlib.contextmanager
def gpxpy_stdlib():
    """Make gpxpy use its standard-library ElementTree back end (its fastest here) in the block.

    gpxpy picks lxml at import when it is installed (``gpxpy.parser.mod_etree``); with lxml
    it is slower, so the comparison uses the standard library.
    """
    import gpxpy.parser

    saved = gpxpy.parser.mod_etree
    gpxpy.parser.mod_etree = StdlibET
    try:
        if gpxpy.parser.library() != "STDLIB":
            raise RuntimeError("could not switch gpxpy to the standard-library XML back end")
        yield
    finally:
        gpxpy.parser.mod_etree = saved


def gpxpy_parse(path: Path):
    import gpxpy

    with gpxpy_stdlib(), open(path, encoding="utf-8") as fh:
        return gpxpy.parse(fh)


def read_ours(path: Path):
    return read_gpx(path)


def analyse_whole(path: Path) -> dict:
    """Read, condition, label, find rides and onsets, session figures, the JSON document."""
    from sessions.analysis import analyse

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return analyse(read_gpx(path)).to_json()


def timed(fn, *args) -> tuple[float, float]:
    """(CPU seconds of this process, wall seconds) of one call."""
    gc.collect()
    c0, w0 = time.process_time(), time.perf_counter()
    fn(*args)
    return time.process_time() - c0, time.perf_counter() - w0


def alternate(candidates: dict, repeat: int, *args) -> dict[str, dict[str, float]]:
    """Run the candidates in turn ``repeat`` times; medians of CPU and wall seconds."""
    cpu = {k: [] for k in candidates}
    wall = {k: [] for k in candidates}
    for _ in range(repeat):
        for key, fn in candidates.items():
            c, w = timed(fn, *args)
            cpu[key].append(c)
            wall[key].append(w)
    return {k: {"cpu": statistics.median(cpu[k]), "wall": statistics.median(wall[k])} for k in candidates}


# --- results ------------------------------------------------------------------------------------
@dataclass
class Report:
    lines: list[str] = field(default_factory=list)
    targets: list[tuple[str, str, bool]] = field(default_factory=list)  # (target, measured, met)

    def say(self, text: str = "") -> None:
        print(text, flush=True)
        self.lines.append(text)

    def table(self, head: list[str], rows: list[list[str]]) -> None:
        self.say("| " + " | ".join(head) + " |")
        self.say("|" + "|".join("---" for _ in head) + "|")
        for r in rows:
            self.say("| " + " | ".join(r) + " |")
        self.say()

    def target(self, what: str, measured: str, met: bool) -> None:
        self.targets.append((what, measured, bool(met)))


def same_points(path: Path) -> bool:
    """Whether read_gpx and gpxpy give the same fixes (times, positions, elevations)."""
    ours = read_ours(path).points
    g = gpxpy_parse(path)
    pts = [p for t in g.tracks for s in t.segments for p in s.points]
    if len(pts) != len(ours):
        return False
    lat = np.array([p.latitude for p in pts])
    lon = np.array([p.longitude for p in pts])
    ele = np.array([np.nan if p.elevation is None else p.elevation for p in pts], dtype=float)
    tt = pd.to_datetime([p.time for p in pts], utc=True).as_unit("ns")
    return bool(
        np.array_equal(lat, ours["lat"].to_numpy())
        and np.array_equal(lon, ours["lon"].to_numpy())
        and np.array_equal(ele, ours["ele_m"].to_numpy(), equal_nan=True)
        and (tt == pd.DatetimeIndex(ours["time"])).all()
    )


# --- parts --------------------------------------------------------------------------------------
def part_read(rep: Report, folder: Path, repeat: int) -> None:
    rep.say(f"## Reading: read_gpx vs gpxpy.parse (standard-library XML), median of {repeat} alternating runs")
    rows = []
    for label, hours, hz in (("4 h at 1 Hz", 4, 1.0), ("5 h at 5 Hz", 5, 5.0)):
        path = write_track(folder, hours, hz)
        n = int(hours * 3600 * hz)
        same = same_points(path)
        m = alternate({"ours": read_ours, "gpxpy": gpxpy_parse}, repeat, path)
        ratio = m["gpxpy"]["cpu"] / m["ours"]["cpu"]
        rows.append([label, f"{n:,}", f"{path.stat().st_size / 1e6:.1f}", f"{m['ours']['cpu']:.3f}",
                     f"{m['gpxpy']['cpu']:.3f}", f"{ratio:.1f}x",
                     f"{m['gpxpy']['wall'] / m['ours']['wall']:.1f}x", f"{n / m['ours']['cpu']:,.0f}",
                     f"{n / m['gpxpy']['cpu']:,.0f}", "same" if same else "DIFFERENT"])
        rep.target(f"read {label}: read_gpx >= {READ_RATIO_TARGET:g}x gpxpy (CPU), same points",
                   f"{ratio:.1f}x, {'same' if same else 'different'} points", ratio >= READ_RATIO_TARGET and same)
    rep.table(["track", "points", "MB", "read_gpx CPU s", "gpxpy CPU s", "CPU ratio", "wall ratio",
               "points/s ours", "points/s gpxpy", "points"], rows)


def part_analysis(rep: Report, folder: Path, repeat: int) -> None:
    rep.say(f"## Whole analysis of the 4 h 1 Hz file vs gpxpy.parse alone, median of {repeat} alternating runs")
    path = write_track(folder, 4, 1.0)
    n = 4 * 3600
    doc = analyse_whole(path)
    m = alternate({"analysis": analyse_whole, "gpxpy": gpxpy_parse}, repeat, path)
    ratio = m["gpxpy"]["cpu"] / m["analysis"]["cpu"]
    rep.table(["candidate", "CPU s", "wall s", "points/s (CPU)"], [
        ["read + analyse + JSON", f"{m['analysis']['cpu']:.3f}", f"{m['analysis']['wall']:.3f}",
         f"{n / m['analysis']['cpu']:,.0f}"],
        ["gpxpy.parse alone", f"{m['gpxpy']['cpu']:.3f}", f"{m['gpxpy']['wall']:.3f}", f"{n / m['gpxpy']['cpu']:,.0f}"],
    ])
    rep.say(f"rides found: {len(doc['rides'])}, states: {len(doc['states'])}; gpxpy / analysis CPU = {ratio:.2f}")
    rep.say()
    rep.target("whole analysis of 4 h 1 Hz < gpxpy.parse alone (CPU)",
               f"{m['analysis']['cpu']:.3f} s vs {m['gpxpy']['cpu']:.3f} s ({ratio:.2f}x)", ratio > 1.0)


_MEMORY_CHILD = r"""
import json, resource, sys, warnings
sys.path.insert(0, sys.argv[2])
import sessions.gpx, sessions.analysis
base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
peak = base
if sys.argv[1] != "-":
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        doc = sessions.analysis.analyse(sessions.gpx.read_gpx(sys.argv[1])).to_json()
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
print(json.dumps({"imports_kib": base, "peak_kib": peak}))
"""


# ru_maxrss survives fork and exec: a child forked straight from this (large) process would
# report this process's size. A small launcher forks the measured child instead.
_LAUNCHER = "import subprocess, sys; sys.exit(subprocess.run(sys.argv[1:]).returncode)"


def child_memory(path: Path | None) -> dict:
    out = subprocess.run([sys.executable, "-c", _LAUNCHER, sys.executable, "-c", _MEMORY_CHILD,
                          str(path) if path else "-", str(ROOT)], check=True, capture_output=True, text=True)
    return json.loads(out.stdout)


def part_memory(rep: Report, folder: Path, runs: int = 3) -> None:
    rep.say(f"## Peak memory of a fresh process (ru_maxrss), 5 h at 5 Hz (90,000 points), {runs} processes each")
    path = write_track(folder, 5, 5.0)
    imports = [child_memory(None)["peak_kib"] * 1024 / 1e6 for _ in range(runs)]
    whole = [child_memory(path)["peak_kib"] * 1024 / 1e6 for _ in range(runs)]
    rep.table(["process", "peak MB (median)", "peak MB (largest)"], [
        ["imports only (sessions.gpx, sessions.analysis)", f"{statistics.median(imports):.0f}", f"{max(imports):.0f}"],
        ["imports + read + analyse + JSON", f"{statistics.median(whole):.0f}", f"{max(whole):.0f}"],
    ])
    rep.target(f"peak memory, 5 h 5 Hz, whole process < {MEMORY_TARGET_MB:g} MB (largest of {runs})",
               f"{max(whole):.0f} MB (median {statistics.median(whole):.0f}; imports alone {statistics.median(imports):.0f})",
               max(whole) < MEMORY_TARGET_MB)


def part_scaling(rep: Report, folder: Path, hours_list: tuple[float, ...], repeat: int) -> None:
    from sessions.analysis import analyse

    rep.say(f"## Scaling: CPU time versus track length (median of {repeat})")
    rows = []
    per_point = {}
    for hz in (1.0, 5.0):
        for hours in hours_list:
            path = write_track(folder, hours, hz)
            n = int(hours * 3600 * hz)
            track = read_ours(path)

            def ana(_p, track=track):
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    return analyse(track).to_json()

            m = alternate({"read": read_ours, "analyse": ana}, repeat, path)
            total = m["read"]["cpu"] + m["analyse"]["cpu"]
            per_point[(hz, hours)] = total / n
            rows.append([f"{hours:g} h", f"{hz:g} Hz", f"{n:,}", f"{m['read']['cpu']:.3f}", f"{m['analyse']['cpu']:.3f}",
                         f"{total:.3f}", f"{total / n * 1e6:.1f}", f"{n / total:,.0f}"])
    rep.table(["length", "rate", "points", "read CPU s", "analyse+JSON CPU s", "total s", "us/point", "points/s"], rows)
    notes = []
    for hz in (1.0, 5.0):
        a, b = per_point[(hz, hours_list[0])], per_point[(hz, hours_list[-1])]
        notes.append(f"{hz:g} Hz: {hours_list[-1]:g} h costs {b / a:.2f}x the per-point time of {hours_list[0]:g} h")
    rep.say("linearity (1.0 = perfectly linear): " + "; ".join(notes))
    rep.say()


_IMPORT_CHILD = r"""
import json, resource, sys, time
sys.path.insert(0, sys.argv[1])
from sessions.cli import main
t0 = time.perf_counter()
rc = main(sys.argv[2:])
wall = time.perf_counter() - t0
me = resource.getrusage(resource.RUSAGE_SELF)
kids = resource.getrusage(resource.RUSAGE_CHILDREN)
print(json.dumps({"rc": rc, "wall": wall, "parent_cpu": me.ru_utime + me.ru_stime,
                  "workers_cpu": kids.ru_utime + kids.ru_stime}), file=sys.stderr)
"""


def make_season(folder: Path, n: int, seed: int = 500) -> list[Path]:
    """``n`` simulated sessions of 1 to 2 hours, every sampling scheme, half with device speed."""
    from sessions.simulate import SimConfig, simulate_session

    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    samplings = ("1hz", "5hz", "smart")
    for i in range(n):
        path = folder / f"session_{i:04d}.gpx"
        if not path.exists():
            start = pd.Timestamp("2026-01-03T07:00:00Z") + pd.Timedelta(days=i // 2, hours=6 * (i % 2))
            sim = simulate_session(SimConfig(seed=seed + i, sampling=samplings[i % 3], duration_s=3600.0 * (1 + (i % 5) / 4),
                                             reported_speed=bool(i % 2), style=("short", "long")[(i // 3) % 2],
                                             start=start.strftime("%Y-%m-%dT%H:%M:%SZ")))
            write_gpx(sim.points, path)
        paths.append(path)
    return paths


def run_import_cli(folder: Path, db: Path, jobs: int) -> dict:
    for suffix in ("", "-wal", "-shm", ".migrate-lock"):
        Path(str(db) + suffix).unlink(missing_ok=True)
    out = subprocess.run([sys.executable, "-c", _IMPORT_CHILD, str(ROOT), "import", str(folder), "--jobs", str(jobs),
                          "--quiet", "--json", "--db", f"sqlite:///{db}"], capture_output=True, text=True)
    if out.returncode != 0:
        raise RuntimeError(f"floatlift import --jobs {jobs} failed: {out.stderr.strip()[-400:]}")
    stats = json.loads(out.stderr.strip().splitlines()[-1])
    summary = json.loads(out.stdout)
    stats["imported"] = len(summary["imported"])
    stats["refused"] = len(summary["refused"])
    return stats


def library_digest(db: Path) -> list[tuple]:
    """Everything an import decides, keyed by file hash (ids and import times left out)."""
    con = sqlite3.connect(db)
    try:
        sessions = con.execute("SELECT sha256, analysis, points, rides FROM sessions ORDER BY sha256").fetchall()
        rides = con.execute("SELECT s.sha256, r.ride_index, r.start, r.end, r.onset_speed_mps FROM rides r "
                            "JOIN sessions s ON s.id = r.session_id ORDER BY s.sha256, r.ride_index").fetchall()
        states = con.execute("SELECT s.sha256, t.seq, t.state, t.start, t.end FROM states t "
                             "JOIN sessions s ON s.id = t.session_id ORDER BY s.sha256, t.seq").fetchall()
    finally:
        con.close()
    return [tuple((sha, json.loads(a), p, r) for sha, a, p, r in sessions), tuple(rides), tuple(states)]


def part_import(rep: Report, folder: Path, n: int, rounds: int) -> None:
    rep.say(f"## Import of {n} simulated sessions into a fresh SQLite library: --jobs 1 vs --jobs 2, "
            f"{rounds} alternating round(s)")
    t0 = time.perf_counter()
    paths = make_season(folder / "season", n)
    mb = sum(p.stat().st_size for p in paths) / 1e6
    rep.say(f"generated {len(paths)} GPX files ({mb:.0f} MB) in {time.perf_counter() - t0:.0f} s")
    runs = {1: [], 2: []}
    digests = {}
    for _ in range(rounds):
        for jobs in (1, 2):
            db = folder / f"import_jobs{jobs}.sqlite"
            st = run_import_cli(folder / "season", db, jobs)
            runs[jobs].append(st)
            digests[jobs] = library_digest(db)
    med = {j: {k: statistics.median(r[k] for r in runs[j]) for k in ("wall", "parent_cpu", "workers_cpu")} for j in runs}
    identical = digests[1] == digests[2]
    ratio = med[1]["wall"] / med[2]["wall"]
    total1 = med[1]["parent_cpu"] + med[1]["workers_cpu"]
    total2 = med[2]["parent_cpu"] + med[2]["workers_cpu"]
    # what two idle cores would give: the parent's work and half the total, whichever is longer
    cpu_estimate = total1 / max(med[2]["parent_cpu"], total2 / 2)
    rows = []
    for j in (1, 2):
        tot = med[j]["parent_cpu"] + med[j]["workers_cpu"]
        rows.append([f"--jobs {j}", f"{med[j]['wall']:.1f}", f"{med[j]['parent_cpu']:.1f}", f"{med[j]['workers_cpu']:.1f}",
                     f"{tot:.1f}", f"{n / med[j]['wall']:.1f}", str(runs[j][-1]["imported"])])
    rep.table(["command", "wall s", "CPU s parent", "CPU s workers", "CPU s total", "sessions/s (wall)", "imported"], rows)
    rep.say(f"wall ratio {ratio:.2f}x; CPU-only estimate for two idle cores {cpu_estimate:.2f}x; "
            f"libraries {'identical' if identical else 'DIFFERENT'}; load average now {os.getloadavg()[0]:.1f}")
    rep.say()
    rep.target(f"import {n} sessions: --jobs 2 >= {IMPORT_RATIO_TARGET:g}x --jobs 1 (wall), identical libraries",
               f"{ratio:.2f}x (CPU estimate {cpu_estimate:.2f}x), {'identical' if identical else 'different'}",
               ratio >= IMPORT_RATIO_TARGET and identical)


def part_dashboard(rep: Report, folder: Path, n: int, warm_runs: int) -> None:
    import logging

    import bench_dashboard  # the library builder of the dashboard benchmark
    from streamlit.testing.v1 import AppTest

    logging.getLogger("streamlit").setLevel(logging.ERROR)  # "missing ScriptRunContext" while building

    rep.say(f"## Dashboard on a library of {n} sessions (AppTest; warm = median of {warm_runs} reruns)")
    db = folder / "dashboard.sqlite"
    url = f"sqlite:///{db}"
    t0 = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        bench_dashboard.build(url, n)
    rep.say(f"library built in {time.perf_counter() - t0:.0f} s")
    os.environ["FLOATLIFT_DB"] = url
    at = AppTest.from_file(bench_dashboard.APP, default_timeout=600)
    c0, w0 = time.process_time(), time.perf_counter()
    at.run()
    rows = [["app start (review page, one session re-analysed and drawn)", f"{time.perf_counter() - w0:.2f}", "", ""]]
    rep.say(f"(app start CPU {time.process_time() - c0:.2f} s)")
    compare = None
    for page in bench_dashboard.PAGES:
        at.switch_page(page)
        c0, w0 = time.process_time(), time.perf_counter()
        at.run()
        first = (time.perf_counter() - w0, time.process_time() - c0)
        if at.exception:
            raise RuntimeError(f"{page}: {[e.message for e in at.exception]}")
        warm, warm_cpu = [], []
        for _ in range(warm_runs):
            c0, w0 = time.process_time(), time.perf_counter()
            at.run()
            warm.append(time.perf_counter() - w0)
            warm_cpu.append(time.process_time() - c0)
        w, wc = statistics.median(warm), statistics.median(warm_cpu)
        rows.append([page, f"{first[0]:.2f}", f"{w:.3f}", f"{wc:.3f}"])
        if page.endswith("compare.py"):
            compare = (first[0], w)
    rep.table(["page", "first run wall s", "cached run wall s", "cached run CPU s"], rows)
    rep.target(f"comparison page, {n} sessions, cached run < {PAGE_TARGET_S:g} s (wall)",
               f"{compare[1]:.3f} s (first run {compare[0]:.1f} s)", compare[1] < PAGE_TARGET_S)


# --- main ---------------------------------------------------------------------------------------
def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true",
                    help="fewer repeats, 60 sessions to import, scaling up to 4 h (1-3 minutes)")
    ap.add_argument("--only", default=",".join(PARTS), help=f"comma-separated parts to run (of {', '.join(PARTS)})")
    ap.add_argument("--repeat", type=int, help="alternating runs per in-process comparison (default 5; quick 3)")
    ap.add_argument("--sessions", type=int, help="sessions to import (default 500; quick 60)")
    ap.add_argument("--dashboard-sessions", type=int, help="sessions in the dashboard library (default 500)")
    ap.add_argument("--rounds", type=int, help="alternating rounds of the import comparison (default 2; quick 1)")
    ap.add_argument("--keep", metavar="FOLDER", help="generate and keep the inputs in FOLDER (reused when present)")
    args = ap.parse_args(argv)
    parts = [p.strip() for p in args.only.split(",") if p.strip()]
    unknown = sorted(set(parts) - set(PARTS))
    if unknown:
        ap.error(f"unknown part(s) {', '.join(unknown)}; choose from {', '.join(PARTS)}")
    repeat = args.repeat or (3 if args.quick else 5)
    n_import = args.sessions or (60 if args.quick else 500)
    n_dash = args.dashboard_sessions or 500
    rounds = args.rounds or (1 if args.quick else 2)
    hours_list = (1.0, 4.0) if args.quick else (1.0, 4.0, 10.0)

    sys.path.insert(0, str(Path(__file__).resolve().parent))
    rep = Report()
    rep.say(f"# floatlift benchmarks ({'quick' if args.quick else 'full'} mode), "
            f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}")
    rep.say(f"Python {platform.python_version()}, {os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.1f}; "
            "CPU = process time, wall = elapsed time")
    rep.say()
    t_start = time.perf_counter()
    tmp = None
    if args.keep:
        folder = Path(args.keep)
        folder.mkdir(parents=True, exist_ok=True)
    else:
        tmp = tempfile.mkdtemp(prefix="floatlift-bench-")
        folder = Path(tmp)
    try:
        if "read" in parts:
            part_read(rep, folder, repeat)
        if "analysis" in parts:
            part_analysis(rep, folder, repeat)
        if "memory" in parts:
            part_memory(rep, folder)
        if "scaling" in parts:
            part_scaling(rep, folder, hours_list, max(1, repeat // 2))
        if "import" in parts:
            part_import(rep, folder, n_import, rounds)
        if "dashboard" in parts:
            part_dashboard(rep, folder, n_dash, 3)
    finally:
        if tmp is not None:
            shutil.rmtree(tmp, ignore_errors=True)
    rep.say("## Targets")
    rep.table(["target", "measured", "result"], [[t, m, "PASS" if ok else "FAIL"] for t, m, ok in rep.targets])
    rep.say(f"total time {time.perf_counter() - t_start:.0f} s")
    return 0 if all(ok for _, _, ok in rep.targets) else 1


if __name__ == "__main__":
    sys.exit(main())
