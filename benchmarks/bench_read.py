"""Benchmark: :func:`sessions.gpx.read_gpx` against ``gpxpy.parse`` (standard-library XML).

Target (issue 11): read_gpx at least 3x faster than gpxpy with its standard-library
ElementTree back end, on a 4-hour 1 Hz track (14,400 points) and a 5-hour 5 Hz track
(90,000 points), producing the same points.

gpxpy picks its XML back end when ``gpxpy.parser`` is imported: lxml when importable
(slower for gpxpy), else ``xml.etree.ElementTree``; the choice is the module attribute
``gpxpy.parser.mod_etree`` (reported by ``gpxpy.parser.library()``). This script sets that
attribute to ``xml.etree.ElementTree`` for the gpxpy runs and restores it afterwards.

Run:  .venv/bin/python benchmarks/bench_read.py [--repeat N] [--quick]

The tracks are generated in a temporary folder (invented positions off an invented beach)
and written with :func:`sessions.gpx_write.write_gpx`: elevation and a reported speed in
``<extensions>`` on every point, times with fractional seconds at 5 Hz.
"""

from __future__ import annotations

import argparse
import contextlib
import gc
import statistics
import sys
import tempfile
import time
import tracemalloc
import xml.etree.ElementTree as StdlibET
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from sessions.gpx import read_gpx  # noqa: E402
from sessions.gpx_write import write_gpx  # noqa: E402


@contextlib.contextmanager
def gpxpy_stdlib():
    """Make gpxpy use the standard-library ElementTree back end inside the block."""
    import gpxpy.parser

    saved = gpxpy.parser.mod_etree
    gpxpy.parser.mod_etree = StdlibET
    try:
        assert gpxpy.parser.library() == "STDLIB"
        yield
    finally:
        gpxpy.parser.mod_etree = saved


def make_track(n: int, rate_hz: float, seed: int = 7) -> pd.DataFrame:
    """A random walk of ``n`` fixes at ``rate_hz`` (invented spot, 2026)."""
    rng = np.random.default_rng(seed)
    t = pd.Timestamp("2026-03-14T06:30:00Z") + pd.to_timedelta(np.arange(n) / rate_hz, unit="s")
    step = 2.0 / rate_hz / 111_000.0  # about 2 m/s in degrees
    return pd.DataFrame(
        {
            "time": t,
            "lat": -38.5 + np.cumsum(rng.normal(0.0, step, n)),
            "lon": 145.1 + np.cumsum(rng.normal(0.0, step, n)),
            "ele_m": rng.normal(0.0, 1.5, n),
            "speed_mps": np.abs(rng.normal(1.5, 1.0, n)),
            "segment": np.zeros(n, dtype=np.int32),
        }
    )


def read_ours(path: Path):
    return read_gpx(path)


def read_gpxpy(path: Path):
    import gpxpy

    with gpxpy_stdlib(), open(path, encoding="utf-8") as fh:
        return gpxpy.parse(fh)


def timed(fn, path: Path) -> tuple[float, float]:
    """(CPU seconds of this process, wall seconds) of one call."""
    gc.collect()
    c0, w0 = time.process_time(), time.perf_counter()
    fn(path)
    return time.process_time() - c0, time.perf_counter() - w0


def peak_mib(fn, path: Path) -> float:
    gc.collect()
    tracemalloc.start()
    try:
        fn(path)
        return tracemalloc.get_traced_memory()[1] / 2**20
    finally:
        tracemalloc.stop()


def same_points(path: Path) -> str:
    """Check that both readers return the same fixes; return a short verdict."""
    ours = read_ours(path).points
    g = read_gpxpy(path)
    pts = [p for t in g.tracks for s in t.segments for p in s.points]
    if len(pts) != len(ours):
        return f"DIFFERENT counts {len(ours)} vs {len(pts)}"
    lat = np.array([p.latitude for p in pts])
    lon = np.array([p.longitude for p in pts])
    ele = np.array([p.elevation for p in pts], dtype=float)
    tt = pd.to_datetime([p.time for p in pts], utc=True).as_unit("ns")
    ok = (
        np.array_equal(lat, ours["lat"].to_numpy())
        and np.array_equal(lon, ours["lon"].to_numpy())
        and np.allclose(ele, ours["ele_m"].to_numpy(), rtol=0, atol=1e-9)
        and (tt == pd.DatetimeIndex(ours["time"])).all()
    )
    return "same" if ok else "DIFFERENT values"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5, help="runs per reader and file (median reported)")
    ap.add_argument("--quick", action="store_true", help="only the 14,400-point file")
    args = ap.parse_args(argv)
    cases = [("4 h at 1 Hz", 14_400, 1.0), ("5 h at 5 Hz", 90_000, 5.0)]
    if args.quick:
        cases = cases[:1]
    rows = []
    failed = False
    with tempfile.TemporaryDirectory() as tmp:
        for label, n, hz in cases:
            path = Path(tmp) / f"bench_{n}.gpx"
            write_gpx(make_track(n, hz), path)
            verdict = same_points(path)
            cpu = {"read_gpx": [], "gpxpy": []}
            wall = {"read_gpx": [], "gpxpy": []}
            for _ in range(args.repeat):  # alternate the readers
                for key, fn in (("read_gpx", read_ours), ("gpxpy", read_gpxpy)):
                    c, w = timed(fn, path)
                    cpu[key].append(c)
                    wall[key].append(w)
            med = {k: statistics.median(v) for k, v in cpu.items()}
            medw = {k: statistics.median(v) for k, v in wall.items()}
            ratio = med["gpxpy"] / med["read_gpx"]
            failed |= ratio < 3.0 or verdict != "same"
            rows.append(
                (
                    label,
                    n,
                    path.stat().st_size / 1e6,
                    med["read_gpx"],
                    med["gpxpy"],
                    ratio,
                    medw["read_gpx"],
                    medw["gpxpy"],
                    medw["gpxpy"] / medw["read_gpx"],
                    n / med["read_gpx"],
                    peak_mib(read_ours, path),
                    peak_mib(read_gpxpy, path),
                    verdict,
                )
            )
    print(f"read_gpx vs gpxpy.parse (standard-library XML back end), median of {args.repeat} alternating runs")
    print("CPU = process time (steady on a shared machine); wall = elapsed time")
    head = (
        "track", "points", "MB", "CPU ours s", "CPU gpxpy s", "CPU ratio", "wall ours s", "wall gpxpy s",
        "wall ratio", "points/s (CPU)", "peak MiB ours", "peak MiB gpxpy", "points",
    )
    print(" | ".join(head))
    for r in rows:
        print(
            f"{r[0]} | {r[1]:,} | {r[2]:.1f} | {r[3]:.3f} | {r[4]:.3f} | {r[5]:.1f}x | {r[6]:.3f} | {r[7]:.3f} | "
            f"{r[8]:.1f}x | {r[9]:,.0f} | {r[10]:.0f} | {r[11]:.0f} | {r[12]}"
        )
    print("target (CPU ratio >= 3.0 and same points):", "MET" if not failed else "NOT MET")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
