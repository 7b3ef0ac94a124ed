"""Importing tracks into the library: sources, zip safety, idempotence, parallel and killed imports.

Tracks are small simulated sessions (sessions.simulate, 15 minutes each). The
multi-process tests run the real command line in subprocesses on one SQLite file.
"""

from __future__ import annotations

import gzip
import io
import json
import os
import shutil
import signal
import sqlite3
import stat
import subprocess
import sys
import time
import zipfile
from pathlib import Path

import pytest
import sqlalchemy as sa

from sessions.cli import main
from sessions.store import Library, db
from sessions.store import importer
from sessions.store.importer import Assignment, Source, collect_sources, import_paths, unsafe_member_reason

PROJECT_ROOT = Path(__file__).resolve().parent.parent
N_TRACKS = 8


@pytest.fixture(scope="module")
def tracks(tmp_path_factory) -> list[Path]:
    """Eight 15-minute simulated sessions on different days, half of them gzip-compressed."""
    from sessions.simulate import simulate_session

    folder = tmp_path_factory.mktemp("tracks")
    paths = []
    for i in range(N_TRACKS):
        sim = simulate_session(seed=100 + i, duration_s=900.0, start=f"2026-04-{i + 1:02d}T07:00:00Z")
        name = f"day{i + 1:02d}.gpx" + (".gz" if i % 2 else "")
        path = folder / name
        data = sim.gpx_bytes()
        path.write_bytes(gzip.compress(data, mtime=0) if i % 2 else data)
        paths.append(path)
    return paths


@pytest.fixture
def url(tmp_path) -> str:
    return db.sqlite_url(tmp_path / "lib.sqlite")


@pytest.fixture(params=["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def any_url(request, tmp_path):
    """A fresh library on SQLite, and on a fresh database of the PostgreSQL test server."""
    if request.param == "sqlite":
        yield db.sqlite_url(tmp_path / "lib.sqlite")
        return
    import secrets

    from sqlalchemy.engine import make_url

    pg_url = request.getfixturevalue("pg_url")
    name = "fl_import_" + secrets.token_hex(6)  # generated identifier: safe to format
    admin = sa.create_engine(pg_url, isolation_level="AUTOCOMMIT")
    with admin.connect() as conn:
        conn.exec_driver_sql(f'CREATE DATABASE "{name}"')
    yield make_url(pg_url).set(database=name).render_as_string(hide_password=False)
    with admin.connect() as conn:
        conn.exec_driver_sql(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')
    admin.dispose()


def run_cli(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


# --- sources and zip safety -----------------------------------------------------------------------
def _zip_with(path: Path, members: dict[str, bytes], symlinks: dict[str, str] | None = None) -> Path:
    with zipfile.ZipFile(path, "w") as zf:
        for name, data in members.items():
            zf.writestr(name, data)
        for name, target in (symlinks or {}).items():
            info = zipfile.ZipInfo(name)
            info.external_attr = (stat.S_IFLNK | 0o777) << 16
            zf.writestr(info, target)
    return path


def test_collect_sources_folders_files_and_refusals(tmp_path, tracks):
    folder = tmp_path / "season"
    (folder / "april").mkdir(parents=True)
    shutil.copy(tracks[0], folder / "april" / tracks[0].name)
    shutil.copy(tracks[1], folder / tracks[1].name)
    (folder / "notes.txt").write_text("not a track")
    stray = tmp_path / "photo.jpg"
    stray.write_bytes(b"\xff\xd8")
    sources, refused = collect_sources([folder, stray, tmp_path / "missing.gpx"])
    assert sorted(Path(s.path).name for s in sources) == sorted([tracks[0].name, tracks[1].name])
    reasons = {Path(r.file).name: r.reason for r in refused}
    assert reasons == {"photo.jpg": "not a .gpx, .gpx.gz or .zip file", "missing.gpx": "no such file or folder"}


def test_zip_members_are_checked_and_read_in_memory(tmp_path, tracks):
    good = tracks[0].read_bytes()
    archive = _zip_with(tmp_path / "bundle.zip", {
        "ok/one.gpx": good,
        "../escape.gpx": good,
        "/abs/root.gpx": good,
        "inner.zip": b"PK\x05\x06" + b"\0" * 18,
        "readme.txt": b"ignored",
    }, symlinks={"link.gpx": "/etc/passwd"})
    before = sorted(p.name for p in tmp_path.iterdir())
    sources, refused = collect_sources([archive])
    assert [s.member for s in sources] == ["ok/one.gpx"]
    assert sources[0].read() == good
    reasons = {r.file.rsplit(":", 1)[1]: r.reason for r in refused}
    assert reasons == {
        "../escape.gpx": "name climbs out of the archive ('..')",
        "/abs/root.gpx": "absolute path inside the archive",
        "inner.zip": "archive inside an archive is not read",
        "link.gpx": "symbolic link inside the archive",
    }
    assert sorted(p.name for p in tmp_path.iterdir()) == before  # nothing extracted


def test_oversized_members_and_files_are_refused(tmp_path, monkeypatch):
    big = b"<gpx>" + b" " * 5000 + b"</gpx>"
    archive = _zip_with(tmp_path / "big.zip", {"big.gpx": big})
    info = zipfile.ZipFile(archive).getinfo("big.gpx")
    assert "larger than the limit of 1000 bytes" in unsafe_member_reason(info, max_bytes=1000)
    (tmp_path / "big.gpx").write_bytes(big)
    with pytest.raises(importer.TrackReadError, match="larger than the limit"):
        Source(str(tmp_path / "big.gpx")).read(max_bytes=1000)
    # a member whose header understates its size is still cut at the limit when read
    with pytest.raises(importer.TrackReadError, match="larger than the limit"):
        Source(str(archive), "big.gpx").read(max_bytes=1000)


def test_damaged_zip_is_refused(tmp_path):
    bad = tmp_path / "broken.zip"
    bad.write_bytes(b"PK\x03\x04 definitely not a whole archive")
    sources, refused = collect_sources([bad])
    assert sources == [] and refused[0].reason.startswith("not a readable zip archive")


# --- importing -------------------------------------------------------------------------------------
def test_import_is_idempotent_and_keeps_the_file_bytes(any_url, tracks):
    with Library.open(any_url) as lib:
        first = import_paths(lib, tracks[:3], workers=1)
        assert len(first.imported) == 3 and first.already_present == [] and first.refused == []
        again = import_paths(lib, tracks[:4], workers=1)
        assert sorted(again.already_present) == sorted(first.imported) and len(again.imported) == 1
        assert lib.counts()["sessions"] == 4
        for sid, path in zip(first.imported, tracks[:3]):
            name, raw = lib.track_bytes(sid)
            assert raw == path.read_bytes() and name == str(path)
        # the analysis stored is the one the analysis module produces for that file
        from sessions.analysis import ANALYSIS_VERSION, analyse_file

        doc = analyse_file(tracks[1]).to_json()
        stored = lib.analysis(first.imported[1])
        assert stored["session"]["rides"] == doc["session"]["rides"]
        assert [r["start"] for r in stored["rides"]] == [r["start"] for r in doc["rides"]]
        assert lib.session(first.imported[1])["analysis_version"] == ANALYSIS_VERSION


def test_same_content_twice_in_one_run_is_stored_once(url, tracks, tmp_path):
    copy = tmp_path / "copy-of-day1.gpx"
    shutil.copy(tracks[0], copy)
    with Library.open(url) as lib:
        s = import_paths(lib, [tracks[0], copy], workers=2)
        assert len(s.imported) == 1 and s.already_present == s.imported
        assert lib.counts()["sessions"] == 1


def test_bad_files_are_refused_with_reasons_and_the_rest_imported(url, tracks, tmp_path):
    (tmp_path / "empty.gpx").write_bytes(b"")
    (tmp_path / "junk.gpx").write_bytes(b"\x00\x01binary")
    (tmp_path / "route.gpx").write_text('<?xml version="1.0"?><gpx version="1.1" creator="t" '
                                        'xmlns="http://www.topografix.com/GPX/1/1"><rte/></gpx>')
    with Library.open(url) as lib:
        s = import_paths(lib, [tmp_path / "empty.gpx", tracks[2], tmp_path / "junk.gpx", tmp_path / "route.gpx"],
                         workers=2)
        assert len(s.imported) == 1
        refused = {Path(r.file).name: r.reason for r in s.refused}
        assert set(refused) == {"empty.gpx", "junk.gpx", "route.gpx"}
        assert all(reason.strip() for reason in refused.values())


def test_assignment_applies_rider_board_conditions(url, tracks):
    with Library.open(url) as lib:
        lib.add_rider("Wren Alcott", body_mass_kg=66)
        lib.add_board("Petrel 6'2", volume_l=33.0)
        s = import_paths(lib, tracks[:2], Assignment("Wren Alcott", "Petrel 6'2", {"wave_face_m": 1.4}), workers=1)
        frame = lib.sessions_frame()
        assert list(frame["rider"]) == ["Wren Alcott"] * 2 and list(frame["board"]) == ["Petrel 6'2"] * 2
        assert list(frame["wave_face_m"]) == [1.4, 1.4] and len(s.imported) == 2
        with pytest.raises(importer.NotFoundError):
            import_paths(lib, tracks[2:3], Assignment(rider="Nobody"), workers=1)
        assert lib.counts()["sessions"] == 2


def test_import_cli_json_contract(capsys, any_url, tracks, tmp_path):
    url = any_url
    archive = _zip_with(tmp_path / "week.zip", {"a/day3.gpx": tracks[2].read_bytes(), "../x.gpx": b"x"})
    code, out, err = run_cli(capsys, "import", tracks[0], tracks[1], archive, "--db", url, "--json", "--quiet",
                             "--jobs", "2", "--wave-face", "4ft", "--wind", "10kn", "--water", "sea")
    assert code == 0, err
    doc = json.loads(out)
    assert set(doc) == {"imported", "already_present", "refused"}
    assert len(doc["imported"]) == 3 and all(isinstance(i, int) for i in doc["imported"])
    assert doc["refused"] == [{"file": f"{archive}:../x.gpx", "reason": "name climbs out of the archive ('..')"}]
    code, out, _ = run_cli(capsys, "import", tracks[0], "--db", url, "--json", "--quiet")
    assert json.loads(out) == {"imported": [], "already_present": [doc["imported"][0]], "refused": []}
    with Library.open(url) as lib:
        c = lib.session(doc["imported"][0])["conditions"]
    assert c["wave_face_m"] == pytest.approx(4 * 0.3048) and c["wind_speed_mps"] == pytest.approx(10 * 1852 / 3600)
    code, out, _ = run_cli(capsys, "list", "--db", url, "--json")
    listed = json.loads(out)
    assert {s["id"] for s in listed} == set(doc["imported"])
    assert {"id", "sha256", "start", "rider", "board", "rides"} <= set(listed[0])


def test_import_cli_bad_input_exits_2_with_one_line(capsys, url, tracks):
    for argv in (["import", "--db", url], ["import", tracks[0], "--db", url, "--rider", "Ghost"],
                 ["import", tracks[0], "--db", url, "--wave-face", "tall"],
                 ["import", tracks[0], "--db", url, "--water", "lake"],
                 ["import", tracks[0], "--db", url, "--jobs", "0"]):
        code, out, err = run_cli(capsys, *argv)
        assert code == 2 and err.count("\n") == 1 and err.startswith("floatlift: error:"), (argv, err)
    with Library.open(url) as lib:
        assert lib.counts()["sessions"] == 0


def test_reanalyse_old_versions_and_all(capsys, any_url, tracks):
    url = any_url
    with Library.open(url) as lib:
        ids = import_paths(lib, tracks[:3], workers=1).imported
        before = lib.session(ids[0])
        with lib.engine.begin() as conn:
            conn.execute(sa.text("UPDATE sessions SET analysis_version = :v WHERE id = :i"), {"v": "0.0-old", "i": ids[0]})
            conn.execute(sa.text("DELETE FROM rides WHERE session_id = :i"), {"i": ids[0]})
    code, out, err = run_cli(capsys, "reanalyse", "--db", url, "--json", "--quiet", "--jobs", "1")
    assert code == 0, err
    assert json.loads(out) == {"reanalysed": [ids[0]], "failed": [], "up_to_date": 2}
    with Library.open(url) as lib:
        after = lib.session(ids[0])
    assert after["ride_list"] == before["ride_list"] and after["analysis_version"] == before["analysis_version"]
    code, out, _ = run_cli(capsys, "reanalyse", "--all", "--db", url, "--json", "--quiet", "--jobs", "2")
    assert sorted(json.loads(out)["reanalysed"]) == sorted(ids)
    code, out, err = run_cli(capsys, "reanalyse", "999", "--db", url)
    assert code == 2 and "no session 999" in err


def test_manifest_import(url, tracks, tmp_path):
    shutil.copy(tracks[0], tmp_path / "t0.gpx")
    shutil.copy(tracks[1], tmp_path / "t1.gpx.gz")
    (tmp_path / "m.toml").write_text(
        'format = "floatlift.manifest/1"\n'
        '[riders.ul]\nname = "Ula Venn"\nbody_mass_kg = 64.0\ngear_mass_kg = 2.0\nstance = "goofy"\n'
        '[boards.kit]\nname = "Kittiwake 5\'9"\ndimensions = "5\'9\\" x 19 1/2\\" x 2 1/2\\""\nvolume = "29.0 L"\n'
        '[[sessions]]\nid = "a"\nfile = "t0.gpx"\nrider = "ul"\nboard = "kit"\n'
        'conditions = { wave_face_m = 1.1, wave_period_s = 10, wind = "light onshore", tide = "mid, falling" }\n'
        'feedback = { paddling = 4, catching = 3, note = "fast" }\n'
        '[[sessions]]\nid = "b"\nfile = "t1.gpx.gz"\nrider = "ul"\nboard = "kit"\n')
    with Library.open(url) as lib:
        s = importer.import_manifest(lib, tmp_path / "m.toml", workers=2)
        assert len(s.imported) == 2 and s.refused == []
        frame = lib.sessions_frame()
        assert set(frame["rider"]) == {"Ula Venn"} and set(frame["board"]) == {"Kittiwake 5'9"}
        first = lib.session(int(frame["session_id"].iloc[0]))
        assert first["conditions"]["tide_phase"] == "falling"
        assert first["conditions"]["note"] == "wind light onshore; tide mid, falling"
        assert first["feedback"]["paddling"] == 4 and first["feedback"]["note"] == "fast"
        assert frame["planform_area_m2"].notna().all() and frame["rider_gear_mass_kg"].iloc[0] == 2.0
        again = importer.import_manifest(lib, tmp_path / "m.toml", workers=1)
        assert again.imported == [] and len(again.already_present) == 2


# --- several processes --------------------------------------------------------------------------------------
def _cli_process(*argv) -> subprocess.Popen:
    env = dict(os.environ, PYTHONPATH=str(PROJECT_ROOT))
    return subprocess.Popen([sys.executable, "-m", "sessions", *map(str, argv)], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, env=env, cwd=PROJECT_ROOT)


def _whole_sessions(url: str) -> dict[str, int]:
    """sha256 -> rides of every stored session, checking that each one is whole."""
    with Library.open(url) as lib:
        out = {}
        for s in lib.sessions():
            detail = lib.session(s["id"])
            assert len(detail["ride_list"]) == detail["rides"] and detail["states"], s
            assert detail["sha256"] not in out
            out[detail["sha256"]] = detail["rides"]
        return out


@pytest.mark.slow
def test_two_processes_import_overlapping_sets(tmp_path, tracks):
    url = db.sqlite_url(tmp_path / "shared.sqlite")
    Library.open(url).close()
    a = _cli_process("import", *tracks[:6], "--db", url, "--json", "--quiet", "--jobs", "1")
    b = _cli_process("import", *tracks[2:], "--db", url, "--json", "--quiet", "--jobs", "1")
    out_a, err_a = a.communicate(timeout=300)
    out_b, err_b = b.communicate(timeout=300)
    assert a.returncode == 0 and b.returncode == 0, (err_a, err_b)
    ra, rb = json.loads(out_a), json.loads(out_b)
    assert ra["refused"] == [] and rb["refused"] == []
    assert not set(ra["imported"]) & set(rb["imported"])
    assert len(ra["imported"]) + len(ra["already_present"]) == 6
    assert len(rb["imported"]) + len(rb["already_present"]) == 6
    stored = _whole_sessions(url)
    import hashlib

    assert set(stored) == {hashlib.sha256(p.read_bytes()).hexdigest() for p in tracks}
    assert len(set(ra["imported"]) | set(rb["imported"])) == N_TRACKS


@pytest.mark.slow
def test_killed_import_leaves_whole_sessions_and_a_rerun_completes(tmp_path, tracks):
    url = db.sqlite_url(tmp_path / "killed.sqlite")
    Library.open(url).close()
    many = []
    for rep in range(2):  # 16 files: the import outlives the first stored sessions
        for p in tracks:
            copy = tmp_path / f"r{rep}-{p.name}"
            data = p.read_bytes()
            # a distinct file per copy: same track, one more comment byte pattern
            if p.name.endswith(".gz"):
                data = gzip.compress(gzip.decompress(data) + f"<!-- {rep} -->".encode(), mtime=0)
            else:
                data = data + f"<!-- {rep} -->".encode()
            copy.write_bytes(data)
            many.append(copy)
    proc = _cli_process("import", *many, "--db", url, "--quiet", "--jobs", "1")
    path = db.sqlite_path(url)
    deadline = time.monotonic() + 120
    stored = 0
    while time.monotonic() < deadline and proc.poll() is None:
        try:
            with sqlite3.connect(path, timeout=5) as conn:
                stored = conn.execute("SELECT count(*) FROM sessions").fetchone()[0]
        except sqlite3.OperationalError:
            stored = 0
        if stored >= 2:
            break
        time.sleep(0.02)
    assert proc.poll() is None, "the import ended before it could be killed; give it more files"
    proc.send_signal(signal.SIGKILL)
    proc.communicate(timeout=30)  # reaps it and closes its pipes
    assert proc.returncode == -signal.SIGKILL
    partial = _whole_sessions(url)
    assert 2 <= len(partial) < len(many)
    rerun = _cli_process("import", *many, "--db", url, "--quiet", "--json", "--jobs", "2")
    out, err = rerun.communicate(timeout=300)
    assert rerun.returncode == 0, err
    doc = json.loads(out)
    assert len(doc["already_present"]) == len(partial) and len(doc["imported"]) == len(many) - len(partial)
    assert len(_whole_sessions(url)) == len(many)
