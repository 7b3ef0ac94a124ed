"""The parallel import really runs in two worker processes and changes nothing in the result.

Also: the bulk time formatting used by the analysis document gives exactly the texts of
the one-at-a-time formatter (pandas ``Timestamp`` arithmetic, rounding and ``strftime``).
No timings here: speed is measured in ``benchmarks/run_all.py``.
"""

from __future__ import annotations

import gzip
import json
import os
import sqlite3
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sessions.analysis import iso_utc, iso_utc_offsets
from sessions.store import Library, db
from sessions.store import importer
from sessions.store.importer import Source, import_paths
from sessions.store.library import EncodedTrack, decode_track


@pytest.fixture(scope="module")
def tracks(tmp_path_factory) -> list[Path]:
    """Six 10-minute simulated sessions (1 Hz, 5 Hz, irregular), one gzip-compressed."""
    from sessions.simulate import simulate_session

    folder = tmp_path_factory.mktemp("season")
    paths = []
    for i in range(6):
        sim = simulate_session(seed=700 + i, duration_s=600.0, sampling=("1hz", "5hz", "smart")[i % 3],
                               reported_speed=bool(i % 2), start=f"2026-05-{i + 1:02d}T06:30:00Z")
        data = sim.gpx_bytes()
        path = folder / (f"s{i}.gpx.gz" if i == 5 else f"s{i}.gpx")
        path.write_bytes(gzip.compress(data, mtime=0) if i == 5 else data)
        paths.append(path)
    return paths


def test_two_jobs_use_two_worker_processes(tracks):
    outcomes = []
    tasks = [(i, Source(str(p)), None, p.name) for i, p in enumerate(tracks)]
    importer._run_parallel(tasks, 2, outcomes.append, len(tasks))
    assert sorted(o.key for o in outcomes) == list(range(len(tracks)))
    assert all(o.ok for o in outcomes), [o.reason for o in outcomes]
    pids = {o.worker_pid for o in outcomes}
    assert len(pids) == 2 and os.getpid() not in pids
    # one job: everything in this process
    single = []
    importer._run_parallel(tasks[:2], 1, single.append, 2)
    assert {o.worker_pid for o in single} == {os.getpid()}


def test_worker_result_carries_the_compressed_file_and_its_hash(tracks):
    import hashlib

    for path in (tracks[0], tracks[5]):
        out = importer._analyse_source(0, Source(str(path)), None, path.name)
        raw = path.read_bytes()
        assert out.ok and isinstance(out.track, EncodedTrack)
        assert out.track.sha256 == hashlib.sha256(raw).hexdigest()
        assert out.track.size_b == len(raw)
        assert decode_track(out.track.blob, out.track.codec) == raw
        assert out.track.codec == ("as-is" if raw[:2] == b"\x1f\x8b" else "gzip")


def _digest(path: Path) -> tuple:
    con = sqlite3.connect(path)
    try:
        sessions = [(sha, json.loads(a), blob, codec, size) for sha, a, blob, codec, size in con.execute(
            "SELECT sha256, analysis, track_blob, track_codec, track_size_b FROM sessions ORDER BY sha256")]
        rides = con.execute("SELECT s.sha256, r.ride_index, r.catch_start, r.start, r.end, r.duration_s, r.distance_m, "
                            "r.peak_speed_mps, r.mean_speed_mps, r.onset_speed_mps, r.onset_ci_lo_mps, r.onset_ci_hi_mps "
                            "FROM rides r JOIN sessions s ON s.id = r.session_id ORDER BY s.sha256, r.ride_index").fetchall()
        states = con.execute("SELECT s.sha256, t.seq, t.state, t.start, t.end FROM states t "
                             "JOIN sessions s ON s.id = t.session_id ORDER BY s.sha256, t.seq").fetchall()
    finally:
        con.close()
    return sessions, rides, states


def test_one_and_two_jobs_give_identical_libraries(tracks, tmp_path):
    digests = {}
    for jobs in (1, 2):
        path = tmp_path / f"jobs{jobs}.sqlite"
        with Library.open(db.sqlite_url(path)) as lib:
            summary = import_paths(lib, tracks, workers=jobs)
            assert len(summary.imported) == len(tracks) and not summary.refused
            # what was stored is what the analysis said
            for sid in summary.imported:
                doc = lib.analysis(sid)
                frame = lib.rides_frame()
                assert len(doc["states"]) > 0
                assert (frame["session_id"] == sid).sum() == len(doc["rides"])
        digests[jobs] = _digest(path)
    sessions, rides, states = digests[1]
    assert len(sessions) == len(tracks) and len(states) > len(tracks)
    assert digests[1] == digests[2]


def test_bulk_rows_match_the_analysis_document(tracks, tmp_path):
    """Rides and states written in bulk carry the document's values, times in UTC."""
    with Library.open(db.sqlite_url(tmp_path / "one.sqlite")) as lib:
        ids = import_paths(lib, tracks, workers=1).imported
        pairs = [(lib.analysis(sid), lib.session(sid)) for sid in ids]
    assert sum(len(doc["rides"]) for doc, _ in pairs) > 0
    for doc, stored in pairs:
        _same_rows(doc, stored)


def _same_rows(doc: dict, stored: dict) -> None:
    assert len(stored["ride_list"]) == len(doc["rides"])
    for got, want in zip(stored["ride_list"], doc["rides"]):
        assert got["index"] == want["index"]
        for key in ("catch_start", "start", "end"):
            assert pd.Timestamp(got[key]).tz_convert("UTC") == pd.Timestamp(want[key])
        for key in ("duration_s", "distance_m", "peak_speed_mps", "onset_speed_mps"):
            assert got[key] == want[key]
        assert got["onset_ci_mps"] == want["onset_ci_mps"]
    assert [st["state"] for st in stored["states"]] == [st["state"] for st in doc["states"]]
    assert [pd.Timestamp(st["start"]).tz_convert("UTC") for st in stored["states"]] == [
        pd.Timestamp(st["start"]) for st in doc["states"]]


@pytest.mark.parametrize("start", ["2026-04-18T07:00:00Z", "2026-04-18T07:00:00.123456789Z", "1999-12-31T23:59:59.9995Z"])
def test_bulk_iso_times_equal_the_one_at_a_time_texts(start):
    rng = np.random.default_rng(5)
    offsets = np.concatenate([
        rng.uniform(0.0, 40_000.0, 3000),
        np.arange(0.0, 600.0, 0.2),
        np.round(rng.uniform(0.0, 1e4, 1000), 4),
        [0.0, 0.0005, 0.0015, 0.0025, 1e-9, 0.4995, 59.9995],  # halfway cases round to even
    ])
    ts = pd.Timestamp(start)
    assert iso_utc_offsets(ts, offsets) == [iso_utc(ts + pd.Timedelta(seconds=float(v))) for v in offsets]
