"""Faults while the library is written: a killed import or re-analysis, a full disk, a
PostgreSQL server that goes away mid-import, a read-only library file.

For each: the library stays consistent (whole sessions only: every stored session has its
track, its states and as many ride rows as its analysis lists; SQLite's integrity and
foreign-key checks pass), the user is told what happened in one line without a traceback
and with a non-zero exit, and running the same command again completes the work.

The commands run in subprocesses (the real program, killed or limited from outside).
"""

from __future__ import annotations

import gzip
import json
import os
import shutil
import signal
import socket
import sqlite3
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pytest
import sqlalchemy as sa

from sessions.store import Library, db
from conftest import need_service

PROJECT_ROOT = Path(__file__).resolve().parent.parent
N_TRACKS = 12


@pytest.fixture(scope="module")
def tracks(tmp_path_factory) -> list[Path]:
    """Twelve 10-minute simulated sessions at an invented beach, every other one gzip-compressed."""
    from sessions.simulate import simulate_session

    folder = tmp_path_factory.mktemp("fault-tracks")
    paths = []
    for i in range(N_TRACKS):
        data = simulate_session(seed=300 + i, duration_s=600.0, start=f"2026-06-{i + 1:02d}T06:30:00Z").gpx_bytes()
        path = folder / (f"dawn{i + 1:02d}.gpx" + (".gz" if i % 2 else ""))
        path.write_bytes(gzip.compress(data, mtime=0) if i % 2 else data)
        paths.append(path)
    return paths


def floatlift(*argv, env=None, preexec=None, wrapper=()) -> subprocess.Popen:
    full_env = dict(os.environ, PYTHONDONTWRITEBYTECODE="1")
    full_env.pop("FLOATLIFT_DEBUG", None)
    full_env.update(env or {})
    return subprocess.Popen([*wrapper, sys.executable, "-m", "sessions", *map(str, argv)], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=full_env, cwd=PROJECT_ROOT)


def finish(proc: subprocess.Popen, timeout: float = 300) -> tuple[int, str, str]:
    out, err = proc.communicate(timeout=timeout)
    return proc.returncode, out, err


def assert_one_line_error(code: int, out: str, err: str, *, secret: str | None = None) -> str:
    assert code == 2, (code, out, err)
    lines = [line for line in err.splitlines() if line.strip() and not line.startswith("floatlift: warning:")]
    assert len(lines) == 1 and lines[0].startswith("floatlift: error:"), err
    assert "Traceback" not in err + out
    if secret:
        assert secret not in err + out
    print("told the user:", lines[0])  # shown with pytest -s (figures for docs/reliability.md)
    return lines[0]


def consistent_sessions(url: str) -> dict[str, tuple[int, str]]:
    """sha256 -> (rides, analysis version) of every stored session, after checking each is whole."""
    path = db.sqlite_path(url)
    if path is not None:
        with sqlite3.connect(path, timeout=30) as conn:
            assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
            assert conn.execute("PRAGMA foreign_key_check").fetchall() == []
    out = {}
    with Library.open(url) as lib:
        with lib.engine.connect() as conn:
            ride_rows = dict(conn.execute(sa.text("SELECT session_id, count(*) FROM rides GROUP BY session_id")).all())
            state_rows = dict(conn.execute(sa.text("SELECT session_id, count(*) FROM states GROUP BY session_id")).all())
            orphans = conn.execute(sa.text("SELECT count(*) FROM rides WHERE session_id NOT IN "
                                           "(SELECT id FROM sessions)")).scalar()
        assert orphans == 0
        for s in lib.sessions():
            sid = s["id"]
            analysis = lib.analysis(sid)
            assert ride_rows.get(sid, 0) == s["rides"] == len(analysis["rides"]), s
            assert state_rows.get(sid, 0) > 0, f"session {sid} has no states"
            lib.track_bytes(sid)  # raises when the stored file does not match its hash
            assert s["sha256"] not in out
            out[s["sha256"]] = (s["rides"], lib.session(sid)["analysis_version"])
    return out


def sha_of(paths) -> set[str]:
    import hashlib

    return {hashlib.sha256(Path(p).read_bytes()).hexdigest() for p in paths}


def count_sessions(url: str, version: str | None = None) -> int:
    try:
        with sqlite3.connect(db.sqlite_path(url), timeout=5) as conn:
            if version is None:
                return conn.execute("SELECT count(*) FROM sessions").fetchone()[0]
            return conn.execute("SELECT count(*) FROM sessions WHERE analysis_version = ?", (version,)).fetchone()[0]
    except sqlite3.OperationalError:
        return 0


def wait_for(condition, proc: subprocess.Popen, timeout: float = 120) -> None:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline and proc.poll() is None:
        if condition():
            return
        time.sleep(0.02)
    assert proc.poll() is None, "the command ended before the fault could be injected; give it more work"
    raise AssertionError("condition not reached in time")


# --- SIGKILL ------------------------------------------------------------------------------------
@pytest.mark.slow
@pytest.mark.timeout(300)
def test_sigkill_during_import_keeps_whole_sessions_and_a_rerun_completes(tmp_path, tracks):
    url = db.sqlite_url(tmp_path / "lib.sqlite")
    Library.open(url).close()
    proc = floatlift("import", *tracks, "--db", url, "--quiet", "--jobs", "1")
    wait_for(lambda: count_sessions(url) >= 2, proc)
    proc.send_signal(signal.SIGKILL)
    proc.communicate(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    partial = consistent_sessions(url)
    assert 2 <= len(partial) < N_TRACKS
    code, out, err = finish(floatlift("import", *tracks, "--db", url, "--quiet", "--json", "--jobs", "2"))
    assert code == 0, err
    doc = json.loads(out)
    assert len(doc["already_present"]) == len(partial) and len(doc["imported"]) == N_TRACKS - len(partial)
    assert set(consistent_sessions(url)) == sha_of(tracks)


@pytest.mark.slow
@pytest.mark.timeout(300)
def test_sigkill_during_reanalyse_keeps_whole_sessions_and_a_rerun_completes(tmp_path, tracks):
    from sessions.analysis import ANALYSIS_VERSION
    from sessions.store.importer import import_paths

    url = db.sqlite_url(tmp_path / "lib.sqlite")
    with Library.open(url) as lib:
        assert len(import_paths(lib, tracks, workers=2).imported) == N_TRACKS
        with lib.engine.begin() as conn:  # as if analysed by an older version
            conn.execute(sa.text("UPDATE sessions SET analysis_version = '0.0-older'"))
    before = consistent_sessions(url)
    proc = floatlift("reanalyse", "--db", url, "--quiet", "--jobs", "1")
    wait_for(lambda: count_sessions(url, ANALYSIS_VERSION) >= 2, proc)
    proc.send_signal(signal.SIGKILL)
    proc.communicate(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    middle = consistent_sessions(url)
    versions = [v for _, v in middle.values()]
    assert set(middle) == set(before)
    assert 2 <= versions.count(ANALYSIS_VERSION) < N_TRACKS and set(versions) == {ANALYSIS_VERSION, "0.0-older"}
    code, out, err = finish(floatlift("reanalyse", "--db", url, "--quiet", "--json", "--jobs", "2"))
    assert code == 0, err
    doc = json.loads(out)
    assert len(doc["reanalysed"]) == versions.count("0.0-older") and doc["failed"] == []
    after = consistent_sessions(url)
    assert {v for _, v in after.values()} == {ANALYSIS_VERSION}
    assert {k: r for k, (r, _) in after.items()} == {k: r for k, (r, _) in before.items()}  # same rides


# --- full disk ------------------------------------------------------------------------------------
#: Runs the command line with a file-size limit: writes beyond it fail with EFBIG (the
#: default action of SIGXFSZ, ending the process, is turned off) as on a full disk.
LIMITED = """
import resource, signal, sys
signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
limit = int(sys.argv[1])
resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))
from sessions.cli import main
sys.exit(main(sys.argv[2:]))
"""


@pytest.mark.timeout(300)
def test_full_disk_during_import_stops_with_one_line_and_a_rerun_completes(tmp_path, tracks):
    url = db.sqlite_url(tmp_path / "lib.sqlite")
    Library.open(url).close()
    path = db.sqlite_path(url)
    # room for the database as it is and a few sessions in the write-ahead log
    limit = max(path.stat().st_size, 64 * 1024) + 160 * 1024
    env = dict(os.environ, PYTHONDONTWRITEBYTECODE="1")
    env.pop("FLOATLIFT_DEBUG", None)
    proc = subprocess.run([sys.executable, "-c", LIMITED, str(limit), "import", *map(str, tracks), "--db", url,
                           "--quiet", "--jobs", "1"], capture_output=True, text=True, env=env, cwd=PROJECT_ROOT,
                          timeout=240)
    line = assert_one_line_error(proc.returncode, proc.stdout, proc.stderr)
    assert "disk is full" in line or "disk I/O error" in line, line
    partial = consistent_sessions(url)
    assert len(partial) < N_TRACKS
    code, out, err = finish(floatlift("import", *tracks, "--db", url, "--quiet", "--json", "--jobs", "2"))
    assert code == 0, err
    doc = json.loads(out)
    assert len(doc["already_present"]) == len(partial) and len(doc["imported"]) == N_TRACKS - len(partial)
    assert set(consistent_sessions(url)) == sha_of(tracks)


# --- read-only library ----------------------------------------------------------------------------
def _without_root_override() -> tuple[str, ...]:
    """Command prefix that makes root obey file permissions (drops CAP_DAC_OVERRIDE)."""
    if os.geteuid() != 0:
        return ()
    setpriv = shutil.which("setpriv")
    if setpriv is None:
        pytest.skip("running as root without setpriv: file permissions cannot be enforced")
    caps = "-dac_override,-dac_read_search,-fowner"
    return (setpriv, f"--inh-caps={caps}", f"--bounding-set={caps}")


@pytest.mark.timeout(300)
def test_read_only_library_refuses_writes_with_one_line_and_keeps_its_contents(tmp_path, tracks):
    from sessions.store.importer import import_paths

    folder = tmp_path / "ro"
    folder.mkdir()
    url = db.sqlite_url(folder / "lib.sqlite")
    with Library.open(url) as lib:
        import_paths(lib, tracks[:2], workers=1)
    with sqlite3.connect(folder / "lib.sqlite") as conn:
        conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    before = consistent_sessions(url)
    digest = sha_of([folder / "lib.sqlite"])
    wrapper = _without_root_override()
    for item in folder.iterdir():
        item.chmod(0o444)
    folder.chmod(0o555)
    try:
        code, out, err = finish(floatlift("import", *tracks[2:4], "--db", url, "--quiet", "--jobs", "1",
                                          wrapper=wrapper))
        line = assert_one_line_error(code, out, err)
        assert "readonly" in line or "read-only" in line or "unable to open" in line, line
        code, out, err = finish(floatlift("rider", "add", "Oriel Fane", "--mass", "64", "--db", url,
                                          wrapper=wrapper))
        assert_one_line_error(code, out, err)
        assert sha_of([folder / "lib.sqlite"]) == digest  # not a byte changed
    finally:
        folder.chmod(0o755)
        for item in folder.iterdir():
            item.chmod(0o644)
    assert consistent_sessions(url) == before
    code, out, err = finish(floatlift("import", *tracks[2:4], "--db", url, "--quiet", "--json", "--jobs", "1"))
    assert code == 0, err
    assert len(json.loads(out)["imported"]) == 2


# --- PostgreSQL server going away mid-import --------------------------------------------------------
class ThrowawayPostgres:
    """A PostgreSQL server of our own on a free 127.0.0.1 port, so a test may stop and start it."""

    def __init__(self) -> None:
        bins = sorted(Path("/usr/lib/postgresql").glob("*/bin/pg_ctl"))
        need_service(bool(bins), "PostgreSQL server binaries are not installed")
        self.bin = bins[-1].parent
        self.root = Path(tempfile.mkdtemp(prefix="fl-faults-pg-"))
        self.as_postgres: tuple[str, ...] = ()
        if os.geteuid() == 0:  # initdb refuses to run as root
            shutil.chown(self.root, "postgres")
            self.as_postgres = ("runuser", "-u", "postgres", "--")
        with socket.socket() as s:
            s.bind(("127.0.0.1", 0))
            self.port = s.getsockname()[1]
        self.data = self.root / "data"
        self._run("initdb", "-D", self.data, "-U", "postgres", "--auth=trust", "-E", "UTF8")
        self.start()

    def _run(self, tool: str, *args) -> None:
        subprocess.run([*self.as_postgres, str(self.bin / tool), *map(str, args)], check=True,
                       capture_output=True, timeout=120)

    def start(self) -> None:
        self._run("pg_ctl", "-D", self.data, "-l", self.root / "server.log", "-w", "-o",
                  f"-c listen_addresses=127.0.0.1 -p {self.port} -k {self.root} -c fsync=off "
                  "-c synchronous_commit=off -c full_page_writes=off", "start")

    def stop(self, mode: str = "fast") -> None:
        self._run("pg_ctl", "-D", self.data, "-m", mode, "-w", "stop")

    def url(self, password: str | None = None) -> str:
        auth = "postgres" + (f":{password}" if password else "")
        return f"postgresql+psycopg://{auth}@127.0.0.1:{self.port}/postgres"

    def close(self) -> None:
        try:
            self.stop("immediate")
        except subprocess.CalledProcessError:
            pass
        shutil.rmtree(self.root, ignore_errors=True)


@pytest.fixture
def own_postgres():
    server = ThrowawayPostgres()
    yield server
    server.close()


def _pg_count(url: str) -> int:
    try:
        engine = sa.create_engine(url)
        try:
            with engine.connect() as conn:
                return conn.execute(sa.text("SELECT count(*) FROM sessions")).scalar()
        finally:
            engine.dispose()
    except sa.exc.SQLAlchemyError:
        return 0


@pytest.mark.slow
@pytest.mark.timeout(400)
def test_postgres_stopped_and_restarted_mid_import(own_postgres, tracks):
    password = "spindrift-Pa55-never-printed"  # trust auth ignores it; it must still never show
    url = own_postgres.url(password)
    Library.open(url).close()
    proc = floatlift("import", *tracks, "--db", url, "--quiet", "--jobs", "1")
    wait_for(lambda: _pg_count(url) >= 2, proc)
    own_postgres.stop("fast")  # ends every connection, refuses new ones
    try:
        code, out, err = finish(proc, timeout=120)
    finally:
        own_postgres.start()
    line = assert_one_line_error(code, out, err, secret=password)
    assert "***" in line or "connection" in line, line
    partial = consistent_sessions(url)
    assert 2 <= len(partial) < N_TRACKS
    code, out, err = finish(floatlift("import", *tracks, "--db", url, "--quiet", "--json", "--jobs", "2"))
    assert code == 0, err
    assert password not in out + err
    doc = json.loads(out)
    assert len(doc["already_present"]) == len(partial) and len(doc["imported"]) == N_TRACKS - len(partial)
    assert set(consistent_sessions(url)) == sha_of(tracks)


@pytest.mark.slow
@pytest.mark.timeout(400)
def test_postgres_quick_restart_mid_import_loses_nothing(own_postgres, tracks):
    """A restart between two sessions: the pool's liveness check reconnects, or the import stops
    with one line; either way a re-run ends with every session stored once, whole."""
    url = own_postgres.url()
    Library.open(url).close()
    proc = floatlift("import", *tracks, "--db", url, "--quiet", "--jobs", "1")
    wait_for(lambda: _pg_count(url) >= 2, proc)
    own_postgres.stop("fast")
    own_postgres.start()
    code, out, err = finish(proc, timeout=240)
    print("import across a quick restart exited with", code)
    if code != 0:
        assert_one_line_error(code, out, err)
    code, out, err = finish(floatlift("import", *tracks, "--db", url, "--quiet", "--json", "--jobs", "2"))
    assert code == 0, err
    assert set(consistent_sessions(url)) == sha_of(tracks)
