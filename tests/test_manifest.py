"""Tests of the manifest reader: the demo manifest, and each kind of bad entry."""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest

from sessions.errors import ManifestError
from sessions.manifest import Feedback, read_manifest

SAMPLE = Path(__file__).resolve().parent.parent / "sample_tracks" / "manifest.toml"

CATALOGUE = textwrap.dedent(
    """\
    format = "floatlift.boards/1"
    [boards.gull]
    name = "Gull 6'2\\""
    dimensions = "6'2\\" x 19 3/4\\" x 2 1/2\\""
    volume = "32.0 L"
    mass_kg = 2.9
    outline = [[0.0, 0.0], [0.3048, 0.31], [0.94, 0.50], [1.57, 0.37], [1.88, 0.2]]
    """
)

GOOD = textwrap.dedent(
    """\
    format = "floatlift.manifest/1"
    title = "test"
    board_catalogue = "boards.toml"
    [place]
    name = "Testing Shore"
    lat = 44.0
    lon = -1.3
    [riders.ann]
    name = "Ann"
    body_mass_kg = 70
    gear_mass_kg = 3
    stance = "goofy"
    ability = "advanced"
    [boards.log]
    dimensions = "9'0\\" x 22\\" x 3\\""
    volume = 68
    [[sessions]]
    id = "a"
    file = "tracks/a.gpx"
    rider = "ann"
    board = "gull"
    [sessions.conditions]
    wave_face_m = 1.2
    water = "sea"
    water_temp_c = 14
    [sessions.feedback]
    paddling = 4
    catching = 3
    note = "fine"
    [[sessions]]
    id = "b"
    file = "tracks/b.gpx.gz"
    rider = "ann"
    board = "log"
    """
)


def _write(tmp_path: Path, manifest: str = GOOD, catalogue: str | None = CATALOGUE) -> Path:
    (tmp_path / "tracks").mkdir(exist_ok=True)
    (tmp_path / "tracks" / "a.gpx").write_text("<gpx/>")
    (tmp_path / "tracks" / "b.gpx.gz").write_bytes(b"\x1f\x8b")
    if catalogue is not None:
        (tmp_path / "boards.toml").write_text(catalogue)
    path = tmp_path / "manifest.toml"
    path.write_text(manifest)
    return path


def test_reads_a_good_manifest(tmp_path):
    m = read_manifest(_write(tmp_path))
    assert m.title == "test" and m.place.name == "Testing Shore" and m.place.lat == 44.0
    assert set(m.riders) == {"ann"} and m.riders["ann"].total_mass_kg == 73.0
    assert m.riders["ann"].stance == "goofy"
    assert set(m.boards) == {"gull", "log"}
    gull = m.boards["gull"]
    assert gull.dimensions == "6'2\" x 19 3/4\" x 2 1/2\"" and gull.volume == "32.0 L" and gull.mass_kg == 2.9
    assert gull.outline_m[1] == (0.3048, 0.31) and gull.source == "boards.toml"
    assert m.boards["log"].volume == "68"
    a, b = m.sessions
    assert a.file == (tmp_path / "tracks" / "a.gpx").resolve() and a.file.is_file()
    assert a.conditions.wave_face_m == 1.2 and a.conditions.water == "sea" and a.conditions.water_temp_c == 14.0
    assert a.conditions.wave_period_s is None
    assert a.feedback == Feedback(paddling=4, catching=3, note="fine")
    assert b.feedback is None and b.board == "log"
    assert m.session("b") is b
    with pytest.raises(ManifestError, match="no session with id 'zz'"):
        m.session("zz")


def _bad(tmp_path, old: str, new: str, match: str, catalogue: str | None = CATALOGUE):
    assert old in GOOD or old in (catalogue or "")
    manifest = GOOD.replace(old, new)
    if catalogue is not None and old in catalogue:
        catalogue = catalogue.replace(old, new)
    with pytest.raises(ManifestError, match=match):
        read_manifest(_write(tmp_path, manifest, catalogue))


@pytest.mark.parametrize(
    ("old", "new", "match"),
    [
        ('board = "gull"', 'board = "gannet"', r"manifest.toml: session 1 \('a'\): unknown board 'gannet' \(known: gull, log\)"),
        ('rider = "ann"\nboard = "log"', 'rider = "bob"\nboard = "log"', r"session 2 \('b'\): unknown rider 'bob'"),
        ('file = "tracks/a.gpx"', 'file = "tracks/missing.gpx"', r"session 1 \('a'\): track file 'tracks/missing.gpx' does not exist"),
        ('file = "tracks/b.gpx.gz"', 'file = "tracks/a.gpx"', r"session 2 \('b'\): track file 'tracks/a.gpx' is already used by 'a'"),
        ('id = "b"', 'id = "a"', r"session 2 \('a'\): duplicate session id"),
        ("body_mass_kg = 70", 'body_mass_kg = "70 kg"', r"rider 'ann': body_mass_kg must be a number"),
        ("body_mass_kg = 70", "body_mass_kg = 700", r"rider 'ann': body_mass_kg = 700 is outside 20 to 250"),
        ("body_mass_kg = 70\n", "", r"rider 'ann': body_mass_kg is missing"),
        ("wave_face_m = 1.2", "wave_face_m = nan", r"session 1 \('a'\) conditions: wave_face_m must be a number"),
        ("wave_face_m = 1.2", "wave_face_m = -1", r"wave_face_m = -1 is outside"),
        ("water_temp_c = 14", "water_temperature = 14", r"session 1 \('a'\) conditions: unknown key 'water_temperature'"),
        ('water = "sea"', 'water = "brine"', r"water 'brine' is not one of sea, fresh"),
        ('stance = "goofy"', 'stance = "left"', r"rider 'ann': stance 'left' is not one of regular, goofy"),
        ('ability = "advanced"', 'ability = "pro"', r"rider 'ann': ability 'pro'"),
        ('title = "test"', 'title = "test"\nowner = "me"', r"manifest.toml: top level: unknown key 'owner'"),
        ('name = "Ann"', 'name = "Ann"\nheight_m = 1.8', r"rider 'ann': unknown key 'height_m'"),
        ("paddling = 4", "paddling = 6", r"feedback: paddling must be a whole score from 1 to 5, not 6"),
        ("catching = 3", "catching = 3.5", r"feedback: catching must be a whole score from 1 to 5"),
        ('note = "fine"', 'note = "fine"\nstyle = 3', r"feedback: unknown key 'style'"),
        ('format = "floatlift.manifest/1"', 'format = "other/2"', r"manifest.toml: format 'other/2'"),
        ('title = "test"', 'title = "test"\ntitle = "again"', r"manifest.toml: not valid TOML"),
        ('title = "test"', 'title = "test', r"manifest.toml: not valid TOML"),
        ('board_catalogue = "boards.toml"', 'board_catalogue = "nope.toml"', r"board_catalogue 'nope.toml' does not exist"),
        ('[boards.log]', '[boards.gull]', r"board 'gull' is defined both here and in boards.toml"),
        ('id = "a"\n', "", r"session 1: id is missing"),
        ('rider = "ann"\nboard = "log"', 'board = "log"', r"session 2 \('b'\): rider is missing"),
        ("volume = 68", "volume = true", r"board 'log': volume must be text"),
        ("mass_kg = 2.9", 'mass_kg = "3 lb"', r"boards.toml: board 'gull': mass_kg must be a number"),
        ("[1.57, 0.37], ", "[1.57, 0.37, 9], ", r"boards.toml: board 'gull': outline must be at least 3 stations"),
        ("lat = 44.0", "lat = 95.0", r"\[place\]: lat = 95.0 is outside -90 to 90"),
        ('name = "Ann"', "name = 3", r"rider 'ann': name must be non-empty text"),
    ],
)
def test_bad_entries_raise_manifest_error_naming_file_and_entry(tmp_path, old, new, match):
    _bad(tmp_path, old, new, match)


def test_missing_or_unreadable_files(tmp_path):
    with pytest.raises(ManifestError, match="nothing.toml: file does not exist"):
        read_manifest(tmp_path / "nothing.toml")
    path = tmp_path / "bin.toml"
    path.write_bytes(b"\xff\xfe\x00 binary")
    with pytest.raises(ManifestError, match="bin.toml"):
        read_manifest(path)
    path = tmp_path / "arr.toml"
    path.write_text('sessions = "none"\n')
    with pytest.raises(ManifestError, match=r"arr.toml: 'sessions' must be an array of tables"):
        read_manifest(path)


def test_board_objects_parse_the_trade_notation(tmp_path):
    pytest.importorskip("sessions.boards")
    m = read_manifest(_write(tmp_path))
    boards = m.board_objects()
    gull = boards["gull"]
    # 6'2" = 74 in x 0.0254 m = 1.8796 m (exact inch, units.py)
    assert gull.length_m == pytest.approx(1.8796)
    assert gull.volume_l == pytest.approx(32.0)
    assert gull.outline.source == "stations"
    assert boards["log"].volume_l == pytest.approx(68.0)


def test_board_objects_report_unparseable_figures(tmp_path):
    pytest.importorskip("sessions.boards")
    manifest = GOOD.replace("dimensions = \"9'0\\\" x 22\\\" x 3\\\"\"", 'dimensions = "nine feet or so"')
    assert manifest != GOOD
    m = read_manifest(_write(tmp_path, manifest))
    with pytest.raises(ManifestError, match=r"manifest.toml: board 'log'"):
        m.board_objects()


def test_three_widths_outline(tmp_path):
    pytest.importorskip("sessions.boards")
    catalogue = textwrap.dedent(
        """\
        [boards.gull]
        dimensions = "6'2\\" x 19 3/4\\" x 2 1/2\\""
        volume = "32.0 L"
        nose_width = "12 1/4\\""
        tail_width = "14 1/2\\""
        wide_point = "1\\" back"
        """
    )
    m = read_manifest(_write(tmp_path, catalogue=catalogue))
    gull = m.board_objects()["gull"]
    assert gull.outline.source == "three widths"
    # nose width at 12 in from the nose: 12.25 in = 0.31115 m
    assert gull.outline.widths_at(12 * 0.0254) == pytest.approx(0.31115, abs=1e-6)
    # wide point 1 in behind the centre of a 74-in board: 38 in from the nose
    assert gull.outline.wide_point_from_nose_m == pytest.approx(38 * 0.0254, abs=0.01)


def test_the_demo_manifest(project_root):
    m = read_manifest(project_root / "sample_tracks" / "manifest.toml")
    assert len(m.sessions) >= 20
    assert len(m.riders) >= 3 and len(m.boards) >= 4
    assert all(s.file.is_file() and s.truth is not None and s.truth.is_file() for s in m.sessions)
    masses = sorted(r.body_mass_kg for r in m.riders.values())
    assert masses[0] <= 60 and masses[-1] >= 90
    tests = [s for s in m.sessions if s.series]
    assert tests and all(s.feedback is not None for s in tests)
    faces = [s.conditions.wave_face_m for s in m.sessions]
    assert min(faces) >= 0.6 and max(faces) <= 2.0
    versions = {m.boards[s.board].version for s in tests}
    assert versions == {"v1", "v2"}
    vols = {m.boards[s.board].volume for s in tests}
    assert len(vols) == 1  # the two prototypes have the same stated volume
