"""How fast the dashboard's pages show on a large library.

Run: ``.venv/bin/python benchmarks/bench_dashboard.py [--sessions 500] [--db URL]``

Builds (unless ``--db`` names an existing library) a library of N sessions by analysing
the demo scenario's tracks once and storing each analysis again under a distinct copy of
its file (a GPX comment appended, so the content hash differs), then runs every page
with ``streamlit.testing.v1.AppTest``: a first run (cold caches) and the median of three
further runs (warm caches, what a user sees when moving between pages). The target is a
warm page in under one second. The first view of one session also re-analyses its track
for the drawing; that cost is reported separately.
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import tempfile
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
APP = str(ROOT / "dashboard" / "app.py")
PAGES = ("views/review.py", "views/add_tracks.py", "views/boards.py", "views/compare.py", "views/feedback.py")
TARGET_S = 1.0


def build(url: str, n: int) -> None:
    from sessions.gpx import read_gpx  # noqa: F401 - fail early when the reader is missing
    from sessions.store import Library
    from sessions.store.importer import analyse_track_bytes, import_manifest
    from sessions.store.demo import DEMO_MANIFEST
    from sessions.store.library import decode_track

    with Library.open(url) as lib:
        import_manifest(lib, DEMO_MANIFEST)
        base = lib.sessions()
        stored = []
        for s in base:
            name, raw = lib.track_bytes(s["id"])
            d = lib.session(s["id"])
            stored.append((lib.analysis(s["id"]), raw, d["rider"], d["board"], d.get("conditions") or {}))
        i = 0
        while lib.counts()["sessions"] < n:
            analysis, raw, rider, board, cond = stored[i % len(stored)]
            plain = decode_track(raw, "gzip") if raw[:2] == b"\x1f\x8b" else raw
            copy = plain + f"\n<!-- copy {i} -->\n".encode()
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                if i < 2:  # the copy must still read as the same track
                    analyse_track_bytes(copy, "copy.gpx")
            lib.store_session(analysis, copy, analysis_version=analysis["analysis_version"],
                              source_file=f"copy-{i}.gpx", rider=rider, board=board,
                              conditions={k: v for k, v in cond.items() if v is not None})
            i += 1


def time_pages(url: str) -> None:
    from streamlit.testing.v1 import AppTest

    os.environ["FLOATLIFT_DB"] = url
    at = AppTest.from_file(APP, default_timeout=600)
    t0 = time.perf_counter()
    at.run()
    first_review = time.perf_counter() - t0
    print(f"first view of the review page (frames + one session re-analysed and drawn): {first_review:.2f} s")
    rows = []
    for page in PAGES:
        at.switch_page(page)
        t0 = time.perf_counter()
        at.run()
        cold = time.perf_counter() - t0
        assert not at.exception, [e.message for e in at.exception]
        warm = []
        for _ in range(3):
            t0 = time.perf_counter()
            at.run()
            warm.append(time.perf_counter() - t0)
        rows.append((page, cold, statistics.median(warm)))
    print(f"{'page':24s} {'first run':>10s} {'warm (median of 3)':>20s}")
    for page, cold, warm in rows:
        flag = "" if warm < TARGET_S else "  <- over target"
        print(f"{page:24s} {cold:9.2f}s {warm:19.2f}s{flag}")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sessions", type=int, default=500)
    ap.add_argument("--db", help="existing library to time (skips the build)")
    args = ap.parse_args()
    if args.db:
        time_pages(args.db)
        return 0
    with tempfile.TemporaryDirectory() as tmp:
        url = f"sqlite:///{Path(tmp) / 'bench.sqlite'}"
        t0 = time.perf_counter()
        build(url, args.sessions)
        print(f"built a library of {args.sessions} sessions in {time.perf_counter() - t0:.0f} s")
        time_pages(url)
    return 0


if __name__ == "__main__":
    sys.exit(main())
