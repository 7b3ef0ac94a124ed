"""Load: many writers and readers on one library at once, bounded, on 127.0.0.1 only.

1. One SQLite library file: the dashboard server is up (its health answered throughout),
   the dashboard's pages are run again and again (AppTest, in this process) while two
   ``floatlift import`` processes import overlapping sets of tracks.
2. Concurrent uploads: 8 processes x 5 uploads each through the code path of the
   dashboard's upload page (``dashboard.data.import_uploads``), one track shared by all
   of them, on SQLite and on a PostgreSQL library.

Every session must end up stored exactly once and whole, with no errors; the figures
(sessions, errors, time) are printed (``pytest -s``) and kept in docs/reliability.md.
"""

from __future__ import annotations

import gzip
import hashlib
import json
import os
import re
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest
import sqlalchemy as sa
from conftest import stop_server

from sessions.store import Library, db

PROJECT_ROOT = Path(__file__).resolve().parent.parent
APP = str(PROJECT_ROOT / "dashboard" / "app.py")
WORKERS = 8
UPLOADS_PER_WORKER = 5


@pytest.fixture(scope="module")
def tracks(tmp_path_factory) -> list[Path]:
    """33 ten-minute simulated sessions at an invented beach (4 per upload worker + 1 shared)."""
    from sessions.simulate import simulate_session

    folder = tmp_path_factory.mktemp("load-tracks")
    paths = []
    for i in range(WORKERS * (UPLOADS_PER_WORKER - 1) + 1):
        day = 1 + i % 28
        data = simulate_session(seed=500 + i, duration_s=600.0, start=f"2026-07-{day:02d}T{6 + i // 28:02d}:00:00Z"
                                ).gpx_bytes()
        path = folder / (f"swell{i:02d}.gpx" + (".gz" if i % 3 == 0 else ""))
        path.write_bytes(gzip.compress(data, mtime=0) if i % 3 == 0 else data)
        paths.append(path)
    return paths


def whole_sessions(url: str) -> dict[str, int]:
    """sha256 -> session id, after checking that every session is whole."""
    out = {}
    with Library.open(url) as lib:
        with lib.engine.connect() as conn:
            ride_rows = dict(conn.execute(sa.text("SELECT session_id, count(*) FROM rides GROUP BY session_id")).all())
            state_rows = dict(conn.execute(sa.text("SELECT session_id, count(*) FROM states GROUP BY session_id")).all())
        for s in lib.sessions():
            assert ride_rows.get(s["id"], 0) == s["rides"] and state_rows.get(s["id"], 0) > 0, s
            assert s["sha256"] not in out
            out[s["sha256"]] = s["id"]
    return out


def sha_of(paths) -> set[str]:
    return {hashlib.sha256(Path(p).read_bytes()).hexdigest() for p in paths}


def env_without_debug(**extra) -> dict:
    env = dict(os.environ, PYTHONDONTWRITEBYTECODE="1", **extra)
    env.pop("FLOATLIFT_DEBUG", None)
    return env


# --- 1. dashboard and two imports on one SQLite file --------------------------------------------
@pytest.mark.slow
@pytest.mark.timeout(600)
def test_dashboard_and_two_imports_share_one_sqlite_library(tmp_path, tracks, monkeypatch):
    pytest.importorskip("streamlit.testing.v1")
    from streamlit.testing.v1 import AppTest

    from dashboard.server import free_port
    from sessions.store.importer import import_paths

    url = db.sqlite_url(tmp_path / "shared.sqlite")
    with Library.open(url) as lib:
        import_paths(lib, tracks[:2], workers=1)  # something for the pages to show from the start
    port = free_port()
    errors = open(tmp_path / "dashboard-stderr.txt", "w+", encoding="utf-8")  # noqa: SIM115 - closed below
    server = subprocess.Popen([sys.executable, "-m", "sessions", "dashboard", "--db", url, "--port", str(port)],
                              stdout=subprocess.PIPE, stderr=errors, text=True, cwd=tmp_path,
                              env=env_without_debug())
    try:
        line = server.stdout.readline()
        assert line.startswith(f"floatlift dashboard: http://127.0.0.1:{port}"), line
        health = f"http://127.0.0.1:{port}/_stcore/health"
        first, second = tracks[:20], tracks[10:30]
        t0 = time.perf_counter()
        imports = [subprocess.Popen([sys.executable, "-m", "sessions", "import", *map(str, part), "--db", url,
                                     "--json", "--quiet", "--jobs", "1"], stdout=subprocess.PIPE,
                                    stderr=subprocess.PIPE, text=True, cwd=PROJECT_ROOT, env=env_without_debug())
                   for part in (first, second)]
        monkeypatch.setenv("FLOATLIFT_DB", url)
        page_runs, page_times, health_ok = 0, [], 0
        pages = ["views/review.py", "views/boards.py", "views/feedback.py", "views/add_tracks.py"]
        for round_ in range(200):  # bounded: stops when both imports are done
            if all(p.poll() is not None for p in imports) and round_ >= 4:
                break
            at = AppTest.from_file(APP, default_timeout=120)
            at.run()
            at.switch_page(pages[round_ % len(pages)])
            started = time.perf_counter()
            at.run()
            page_times.append(time.perf_counter() - started)
            assert not at.exception, [e.message for e in at.exception]
            page_runs += 1
            with urllib.request.urlopen(health, timeout=10) as answer:  # noqa: S310 - fixed loopback URL
                assert answer.status == 200
                health_ok += 1
        results = [p.communicate(timeout=300) for p in imports]
        elapsed = time.perf_counter() - t0
        for proc, (out, err) in zip(imports, results):
            assert proc.returncode == 0, err
        docs = [json.loads(out) for out, _ in results]
        assert all(d["refused"] == [] for d in docs)
        assert not set(docs[0]["imported"]) & set(docs[1]["imported"])
        stored = whole_sessions(url)
        assert set(stored) == sha_of(tracks[:30])
        assert server.poll() is None, "the dashboard server stopped"
        print(f"SQLite: 2 imports of 20 files each (10 shared) + dashboard: {len(stored)} sessions, "
              f"{sum(len(d['imported']) for d in docs)} imported, "
              f"{sum(len(d['already_present']) for d in docs)} already present, 0 errors, {elapsed:.1f} s; "
              f"{page_runs} page runs (max {max(page_times):.2f} s), {health_ok} health checks answered")
    finally:
        stop_server(server)
        server.stdout.close()
        errors.close()


# --- 2. concurrent uploads through the upload page's code path -------------------------------------
#: One uploading client: the same call the dashboard's upload page makes, once per file.
UPLOADER = """
import json, logging, sys, time, warnings
logging.disable(logging.WARNING)  # streamlit notes it runs without a server
from dashboard import data
url, rider, board, *paths = sys.argv[1:]
out = {"imported": [], "already_present": [], "refused": [], "errors": [], "seconds": 0.0}
t0 = time.perf_counter()
for path in paths:
    with open(path, "rb") as fh:
        raw = fh.read()
    try:
        r = data.import_uploads(url, [(path.rsplit("/", 1)[-1], raw)], rider=rider, board=board,
                                conditions={"wave_face_m": 1.1})
    except Exception as exc:
        out["errors"].append(f"{type(exc).__name__}: {exc}")
        continue
    out["imported"] += [x["session_id"] for x in r.imported]
    out["already_present"] += [x["session_id"] for x in r.already_present]
    out["refused"] += r.refused
out["seconds"] = time.perf_counter() - t0
print(json.dumps(out))
"""


@pytest.fixture(params=["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def upload_url(request, tmp_path):
    if request.param == "sqlite":
        yield db.sqlite_url(tmp_path / "uploads.sqlite")
        return
    import secrets

    from sqlalchemy.engine import make_url

    pg_url = request.getfixturevalue("pg_url")
    name = "fl_load_" + secrets.token_hex(6)  # generated identifier: safe to put in the statement
    admin = sa.create_engine(pg_url, isolation_level="AUTOCOMMIT")
    with admin.connect() as conn:
        conn.exec_driver_sql(f'CREATE DATABASE "{name}"')
    yield make_url(pg_url).set(database=name).render_as_string(hide_password=False)
    with admin.connect() as conn:
        conn.exec_driver_sql(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')
    admin.dispose()


@pytest.mark.slow
@pytest.mark.timeout(600)
def test_eight_clients_upload_five_tracks_each_at_once(upload_url, tracks):
    url = upload_url
    with Library.open(url) as lib:
        lib.add_rider("Perrin Sallow", body_mass_kg=77)
        lib.add_board("Gannet 6-4", volume_l=36.0)
    shared = tracks[-1]
    plans = [[*tracks[w * 4:(w + 1) * 4], shared] for w in range(WORKERS)]
    t0 = time.perf_counter()
    procs = [subprocess.Popen([sys.executable, "-c", UPLOADER, url, "Perrin Sallow", "Gannet 6-4", *map(str, plan)],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, cwd=PROJECT_ROOT,
                              env=env_without_debug())
             for plan in plans]
    results = [p.communicate(timeout=500) for p in procs]
    elapsed = time.perf_counter() - t0
    docs = []
    for proc, (out, err) in zip(procs, results):
        assert proc.returncode == 0, err
        docs.append(json.loads(out.strip().splitlines()[-1]))
    errors = [e for d in docs for e in d["errors"]] + [r for d in docs for r in d["refused"]]
    assert errors == []
    imported = [i for d in docs for i in d["imported"]]
    present = [i for d in docs for i in d["already_present"]]
    assert len(imported) == len(set(imported)) == len(tracks)
    assert len(present) == WORKERS - 1 and set(present) <= set(imported)  # the shared track, stored once
    stored = whole_sessions(url)
    assert set(stored) == sha_of(tracks)
    with Library.open(url) as lib:
        frame = lib.sessions_frame()
    assert set(frame["rider"]) == {"Perrin Sallow"} and set(frame["board"]) == {"Gannet 6-4"}
    backend = url.split(":", 1)[0]
    print(f"{backend}: {WORKERS} clients x {UPLOADS_PER_WORKER} uploads: {len(stored)} sessions stored, "
          f"{len(present)} recognised as already stored, {len(errors)} errors, {elapsed:.1f} s wall; "
          f"slowest client {max(d['seconds'] for d in docs):.1f} s")
    assert re.match(r"^(sqlite|postgresql)", backend)
