"""The dashboard's pages under streamlit.testing.v1.AppTest, on a small demo library.

The library is built once for the module from six sessions of the invented sample
scenario (the two test boards of one model, three sessions each). Every page must run
without an exception and show the same numbers as the ``sessions`` package computes for
the same session, board, rider or comparison.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pandas as pd
import pytest

from sessions.store import Library
from sessions.units import KN_MPS

pytest.importorskip("streamlit.testing.v1")
from streamlit.testing.v1 import AppTest  # noqa: E402


PROJECT_ROOT = Path(__file__).resolve().parent.parent
SAMPLE_TRACKS_DIR = PROJECT_ROOT / "sample_tracks"
APP = str(PROJECT_ROOT / "dashboard" / "app.py")
#: Track files of the subset: the two prototype versions, three sessions each.
SUBSET = ("whimbrel-v1", "whimbrel-v2")
#: A track of the scenario that is not in the subset (uploaded by the import test).
EXTRA_TRACK = "2026-04-04_0710_maren_sprig-510.gpx.gz"
TIMEOUT_S = 120


def subset_manifest(folder: Path, boards: tuple[str, ...], limit: int | None = None) -> Path:
    """A copy of the sample manifest keeping only the sessions on *boards* (tracks linked)."""
    text = (SAMPLE_TRACKS_DIR / "manifest.toml").read_text(encoding="utf-8")
    head, *blocks = text.split("\n[[sessions]]\n")
    kept = [b for b in blocks if any(f'board = "{name}"' in b for name in boards)]
    if limit is not None:
        kept = kept[:limit]
    folder.mkdir(parents=True, exist_ok=True)
    shutil.copy(SAMPLE_TRACKS_DIR / "boards.toml", folder / "boards.toml")
    (folder / "tracks").symlink_to(SAMPLE_TRACKS_DIR / "tracks", target_is_directory=True)
    out = folder / "manifest.toml"
    out.write_text(head + "".join("\n[[sessions]]\n" + b for b in kept), encoding="utf-8")
    return out


def build_library(folder: Path, boards: tuple[str, ...] = SUBSET, limit: int | None = None) -> str:
    from sessions.store.importer import import_manifest

    url = f"sqlite:///{folder / 'library.sqlite'}"
    manifest = subset_manifest(folder / "scenario", boards, limit)
    with Library.open(url) as lib:
        summary = import_manifest(lib, manifest, workers=2)
    assert summary.refused == [], f"demo tracks refused: {summary.refused}"
    assert summary.imported, "no session imported"
    return url


@pytest.fixture(scope="module")
def library_url(tmp_path_factory) -> str:
    return build_library(tmp_path_factory.mktemp("dash"))


@pytest.fixture()
def app(library_url, monkeypatch) -> AppTest:
    monkeypatch.setenv("FLOATLIFT_DB", library_url)
    at = AppTest.from_file(APP, default_timeout=TIMEOUT_S)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def _open(at: AppTest, page: str) -> AppTest:
    at.switch_page(page)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def _dataframe(at: AppTest, columns_contain: str) -> pd.DataFrame:
    for df in at.dataframe:
        if any(columns_contain in str(c) for c in df.value.columns):
            return df.value
    raise AssertionError(f"no table with a column like {columns_contain!r}")


def _metric(at: AppTest, label: str) -> str:
    for m in at.metric:
        if m.label == label:
            return m.value
    raise AssertionError(f"no metric {label!r}; have {[m.label for m in at.metric]}")


# --- session review -------------------------------------------------------------------
def test_review_shows_the_stored_rides_of_a_chosen_session(app, library_url):
    with Library.open(library_url) as lib:
        sessions = lib.sessions_frame()
        sid = int(sessions["session_id"].iloc[0])  # the oldest, not the page's default
        detail = lib.session(sid)
        doc = lib.analysis(sid)
    app.selectbox(key="review_session").set_value(sid).run()
    assert not app.exception
    assert _metric(app, "Rides") == str(detail["rides"])
    assert _metric(app, "Missed waves") == str(detail["missed_waves"])
    assert _metric(app, "Peak speed") == f"{detail['peak_speed_mps']:.1f} m/s"
    assert _metric(app, "Median planing onset") == f"{doc['session']['median_onset_speed_mps']:.2f} m/s"
    table = _dataframe(app, "onset [")
    assert len(table) == len(detail["ride_list"]) > 0
    expected = [None if r["onset_speed_mps"] is None else round(r["onset_speed_mps"], 2)
                for r in detail["ride_list"]]
    got = [None if pd.isna(v) else v for v in table["onset [m/s]"]]
    assert got == pytest.approx(expected)
    assert list(table["distance [m]"]) == [round(r["distance_m"]) for r in detail["ride_list"]]
    assert list(table["time [s]"]) == [round(r["duration_s"], 1) for r in detail["ride_list"]]
    assert len(app.get("image")) == 2  # the path and the speed pictures


def test_review_units_switch_to_knots(app, library_url):
    with Library.open(library_url) as lib:
        sid = int(lib.sessions_frame()["session_id"].iloc[-1])
        rides = lib.session(sid)["ride_list"]
    app.selectbox(key="review_session").set_value(sid).run()
    app.radio(key="unit_system").set_value("trade").run()
    app.selectbox(key="speed_unit").set_value("knots").run()
    assert not app.exception
    table = _dataframe(app, "onset [")
    onsets = [r["onset_speed_mps"] for r in rides]
    # 1 knot = 1852 m / 3600 s exactly (international nautical mile, 1929)
    assert [v for v in table["onset [kn]"] if not pd.isna(v)] == pytest.approx(
        [round(v / KN_MPS, 2) for v in onsets if v is not None])
    assert round(onsets[0] / KN_MPS, 2) != pytest.approx(round(onsets[0], 2))  # really converted


# --- boards and load -------------------------------------------------------------------------
def test_boards_page_shows_the_load_figures_of_the_package(app, library_url):
    from sessions.load import CAUTION, load_figures

    _open(app, "views/boards.py")
    with Library.open(library_url) as lib:
        board = lib.boards()[-1]["name"]
        rider = lib.riders()[0]["name"]
        figs = load_figures(lib.board_object(board), lib.rider_object(rider), "sea")
        n_boards = len(lib.boards())
    app.selectbox(key="load_board").set_value(board).run()
    app.selectbox(key="load_rider").set_value(rider).run()
    assert not app.exception
    assert _metric(app, "Litres per kg of rider") == f"{figs.litres_per_kg:.2f}"
    assert _metric(app, "Weight the board floats") == f"{figs.lifted_share * 100:.0f} %"
    assert _metric(app, "Planform loading") == f"{figs.planform_loading_n_m2:.0f} N/m²"
    lo, hi = figs.predicted_onset_mps
    assert _metric(app, "Predicted planing speed") == f"{lo:.1f}–{hi:.1f} m/s"
    assert _metric(app, "Smallest catchable wave") == f"{figs.min_breaking_wave_m:.2f} m"
    assert any(CAUTION in w.value for w in app.warning)
    catalogue = _dataframe(app, "volume [L]")
    assert len(catalogue) == n_boards == 6  # the scenario's six boards


def test_boards_page_in_pounds_and_feet(app, library_url):
    from sessions.load import load_figures
    from sessions.units import FT_M, LB_KG

    app.radio(key="unit_system").set_value("trade").run()
    _open(app, "views/boards.py")
    with Library.open(library_url) as lib:
        board = app.selectbox(key="load_board").value
        rider = app.selectbox(key="load_rider").value
        figs = load_figures(lib.board_object(board), lib.rider_object(rider), "sea")
    # 1 lbf/ft² = 47.880 259 N/m² (NIST SP 811, appendix B.8); here from the exact lb, ft and g
    lbf_ft2 = LB_KG * 9.80665 / FT_M**2
    assert lbf_ft2 == pytest.approx(47.880259, rel=1e-7)
    assert _metric(app, "Planform loading") == f"{figs.planform_loading_n_m2 / lbf_ft2:.2f} lb/ft²"
    assert _metric(app, "Smallest catchable wave") == f"{figs.min_breaking_wave_m / FT_M:.2f} ft"
    sizes = _dataframe(app, "size")["size"]
    assert all('"' in s and "'" in s for s in sizes)  # trade notation, feet and inches


# --- comparison --------------------------------------------------------------------------------------
def test_compare_page_matches_the_comparison_engine(app, library_url):
    from sessions import compare as cmp

    _open(app, "views/compare.py")
    chosen = app.multiselect(key="cmp_boards").value
    assert len(chosen) == 2
    with Library.open(library_url) as lib:
        rides, sessions = lib.rides_frame(), lib.sessions_frame(with_sampling=True)
        specs = {n: lib.board_object(n) for n in chosen}
    result = cmp.compare_boards(rides, sessions, cmp.Selection(boards=tuple(chosen)), cmp.Rules(),
                                onset_model=cmp.board_load_model(specs))
    # the engine's fairness notes (riders, fix rates) are shown as they are
    shown = [i.value for i in app.info]
    for note in result.notes:
        assert any(note.split(":")[0] in text for text in shown), (note, shown)
    table = _dataframe(app, "onset median")
    assert list(table["board"]) == chosen
    for row, summary in zip(table.itertuples(index=False), result.boards):
        assert row.rides == summary.rides and row.sessions == summary.sessions
    expected = [round(s.metrics["onset_speed_mps"].median, 2) for s in result.boards]
    assert list(table["onset median [m/s]"]) == pytest.approx(expected)
    diffs = _dataframe(app, "B − A")
    onset = next(d for d in result.differences if d.metric == "onset_speed_mps")
    row = diffs[diffs["metric"] == "planing onset speed"].iloc[0]
    assert row["verdict"] == cmp.verdict_sentence(onset)
    assert row["B − A"] == pytest.approx(round(onset.estimate, 2))
    assert any(cmp.CAUTION in w.value for w in app.warning)


def test_compare_page_shows_when_boards_were_not_ridden_or_recorded_alike(tmp_path_factory, monkeypatch):
    # Sprig (one rider, 1 Hz and 5 Hz tracks) against Moorhen (two other riders, some
    # battery-saving tracks): both fairness notes of the engine appear on the page
    url = build_library(tmp_path_factory.mktemp("fair"), boards=("sprig-510", "moorhen-72"))
    monkeypatch.setenv("FLOATLIFT_DB", url)
    at = AppTest.from_file(APP, default_timeout=TIMEOUT_S)
    at.run()
    _open(at, "views/compare.py")
    assert sorted(at.multiselect(key="cmp_boards").value) == ["Moorhen", "Sprig"]
    shown = [i.value for i in at.info]
    assert any("was ridden by" in t for t in shown), shown
    assert any("recorded differently" in t and "sparse fixes" in t for t in shown), shown


def test_compare_page_asks_for_two_boards(app):
    _open(app, "views/compare.py")
    first = app.multiselect(key="cmp_boards").value[:1]
    app.multiselect(key="cmp_boards").set_value(first).run()
    assert not app.exception
    assert any("at least two boards" in i.value for i in app.info)


# --- feedback -------------------------------------------------------------------------------------------
def test_feedback_is_saved_and_campaign_matches(app, library_url):
    from sessions.compare import campaign_table

    _open(app, "views/feedback.py")
    sid = app.selectbox(key="fb_session").value
    app.slider(key=f"fb_paddling_{sid}").set_value(2)
    app.slider(key=f"fb_control_{sid}").set_value(5)
    app.text_area(key=f"fb_note_{sid}").input("Caught everything; loose off the top.")
    app.button(key="fb_save").click().run()
    assert not app.exception
    assert any("saved" in s.value for s in app.success)
    with Library.open(library_url) as lib:
        stored = lib.session(sid)["feedback"]
        model = app.selectbox(key="campaign_model").value
        expected = campaign_table(lib.rides_frame(), lib.sessions_frame(), model)
    assert stored["paddling"] == 2 and stored["control"] == 5
    assert stored["note"] == "Caught everything; loose off the top."
    table = _dataframe(app, "notes (newest first)")
    assert len(table) == len(expected)
    assert list(table["onset median [m/s]"]) == pytest.approx([round(v, 2) for v in expected["onset_median_mps"]])
    assert any("loose off the top" in note for note in table["notes (newest first)"])


# --- import ---------------------------------------------------------------------------------------------
def test_import_page_stores_good_files_and_explains_refusals(library_url, tmp_path, monkeypatch):
    copy = tmp_path / "copy.sqlite"
    shutil.copy(library_url.removeprefix("sqlite:///"), copy)  # keep the shared library unchanged
    url = f"sqlite:///{copy}"
    monkeypatch.setenv("FLOATLIFT_DB", url)
    at = AppTest.from_file(APP, default_timeout=TIMEOUT_S)
    at.run()
    _open(at, "views/add_tracks.py")
    good = (SAMPLE_TRACKS_DIR / "tracks" / EXTRA_TRACK).read_bytes()
    with Library.open(url) as lib:
        before = lib.counts()["sessions"]
        rider = lib.riders()[0]["name"]
        board = lib.boards()[0]["name"]
    at.file_uploader(key="uploads").set_value([
        (EXTRA_TRACK, good, "application/gzip"),
        ("broken.gpx", b"<gpx><trk><trkseg><trkpt lat=", "application/gpx+xml"),
        ("notes.gz", b"not a track", "application/gzip"),
    ]).run()
    at.selectbox(key="import_rider").set_value(rider)
    at.selectbox(key="import_board").set_value(board)
    at.number_input(key="import_wave").set_value(1.4)
    at.button(key="import_go").click().run()
    assert not at.exception, [e.message for e in at.exception]
    imported = _dataframe(at, "rides")
    refused = _dataframe(at, "reason")
    assert list(imported["file"]) == [EXTRA_TRACK]
    assert sorted(refused["file"]) == ["broken.gpx", "notes.gz"]
    reasons = dict(zip(refused["file"], refused["reason"]))
    assert reasons["notes.gz"] == "not a .gpx or .gpx.gz file"
    assert "GPX" in reasons["broken.gpx"] or "XML" in reasons["broken.gpx"]
    sid = int(imported["session"].iloc[0])
    with Library.open(url) as lib:
        assert lib.counts()["sessions"] == before + 1
        detail = lib.session(sid)
    assert detail["rider"] == rider and detail["board"] == board
    assert detail["conditions"]["wave_face_m"] == pytest.approx(1.4)
    assert int(imported["rides"].iloc[0]) == detail["rides"]
    # the same file again is recognised, not stored twice
    at.file_uploader(key="uploads").set_value((EXTRA_TRACK, good, "application/gzip")).run()
    at.button(key="import_go").click().run()
    assert list(_dataframe(at, "already stored as session")["already stored as session"]) == [sid]
    # and the page opens it in the review
    at.button(key="open_imported").click().run()
    assert not at.exception
    assert at.selectbox(key="review_session").value == sid
    assert _metric(at, "Rides") == str(detail["rides"])


def test_upload_checks_of_our_own():
    from dashboard.data import MAX_UPLOAD_BYTES, check_upload

    assert check_upload("a.gpx", 10) is None
    assert check_upload("A.GPX.GZ", 10) is None
    assert check_upload("a.fit", 10) == "not a .gpx or .gpx.gz file"
    assert "larger than the limit" in check_upload("a.gpx", MAX_UPLOAD_BYTES + 1)
    assert check_upload("a.gpx", 0) == "the file is empty"


def test_empty_library_pages_say_what_to_do(tmp_path, monkeypatch):
    monkeypatch.setenv("FLOATLIFT_DB", f"sqlite:///{tmp_path / 'empty.sqlite'}")
    at = AppTest.from_file(APP, default_timeout=TIMEOUT_S)
    at.run()
    assert not at.exception
    assert any("no sessions yet" in i.value for i in at.info)
    for page in ("views/add_tracks.py", "views/boards.py", "views/compare.py", "views/feedback.py"):
        _open(at, page)
        assert at.info or at.file_uploader, page


def test_no_user_text_is_rendered_as_html():
    from dashboard.ui import md

    for path in (PROJECT_ROOT / "dashboard").rglob("*.py"):
        assert "unsafe_allow_html" not in path.read_text(encoding="utf-8"), path.name
    text = "<b>x</b> [link](http://x) *y* `z`"
    escaped = md(text)
    assert escaped.replace("\\", "") == text  # nothing lost
    for ch in "<>[]()*`":
        assert all(escaped[i - 1] == "\\" for i, c in enumerate(escaped) if c == ch)


def test_boards_page_names_the_figures_a_bare_board_cannot_give(library_url, tmp_path, monkeypatch):
    copy = tmp_path / "copy.sqlite"
    shutil.copy(library_url.removeprefix("sqlite:///"), copy)
    url = f"sqlite:///{copy}"
    with Library.open(url) as lib:
        lib.add_board("Plain slab", volume_l=40.0)  # no mass, no dimensions, no outline
    monkeypatch.setenv("FLOATLIFT_DB", url)
    at = AppTest.from_file(APP, default_timeout=TIMEOUT_S)
    at.run()
    _open(at, "views/boards.py")
    at.selectbox(key="load_board").set_value("Plain slab").run()
    assert not at.exception, [e.message for e in at.exception]
    texts = [t.value for t in at.text]
    assert "No planform loading: needs the board's dimensions or outline" in texts
    assert "No predicted planing speed: needs the board's dimensions or outline" in texts
    assert any("cannot be drawn" in i.value for i in at.info)
    assert _metric(at, "Predicted planing speed") == "–"
    assert _metric(at, "Litres per kg of rider") != "–"  # volume and rider mass suffice


def test_review_lists_stored_rides_when_the_track_cannot_be_drawn(library_url, tmp_path, monkeypatch):
    copy = tmp_path / "copy.sqlite"
    shutil.copy(library_url.removeprefix("sqlite:///"), copy)
    url = f"sqlite:///{copy}"
    with Library.open(url) as lib:
        first = int(lib.sessions_frame()["session_id"].iloc[0])
        analysis = lib.analysis(first)
        sid, created = lib.store_session(analysis, b"<gpx>damaged</gpx>", analysis_version="test",
                                         source_file="damaged.gpx")
        rides = lib.session(sid)["ride_list"]
    assert created
    monkeypatch.setenv("FLOATLIFT_DB", url)
    at = AppTest.from_file(APP, default_timeout=TIMEOUT_S)
    at.run()
    at.selectbox(key="review_session").set_value(sid).run()
    assert not at.exception, [e.message for e in at.exception]
    assert any("cannot be drawn" in w.value for w in at.warning)
    assert len(_dataframe(at, "onset [")) == len(rides) > 0
    assert len(at.get("image")) == 0


@pytest.mark.postgres
def test_pages_run_on_a_team_library_in_postgresql(pg_url, tmp_path, monkeypatch):
    import secrets

    import sqlalchemy as sa
    from sqlalchemy.engine import make_url

    from sessions.store.importer import import_manifest

    name = "fl_dash_" + secrets.token_hex(6)  # generated identifier: safe to format
    admin = sa.create_engine(pg_url, isolation_level="AUTOCOMMIT")
    with admin.connect() as conn:
        conn.exec_driver_sql(f'CREATE DATABASE "{name}"')
    url = make_url(pg_url).set(database=name).render_as_string(hide_password=False)
    try:
        with Library.open(url) as lib:
            import_manifest(lib, subset_manifest(tmp_path / "scenario", ("whimbrel-v2",), limit=1), workers=1)
            sid = lib.sessions()[0]["id"]
            detail = lib.session(sid)
        monkeypatch.setenv("FLOATLIFT_DB", url)
        at = AppTest.from_file(APP, default_timeout=TIMEOUT_S)
        at.run()
        assert not at.exception, [e.message for e in at.exception]
        assert _metric(at, "Rides") == str(detail["rides"])
        for page in ("views/add_tracks.py", "views/boards.py", "views/compare.py", "views/feedback.py"):
            _open(at, page)
        at.slider(key=f"fb_paddling_{sid}").set_value(2)
        at.button(key="fb_save").click().run()
        assert not at.exception
        with Library.open(url) as lib:
            assert lib.session(sid)["feedback"]["paddling"] == 2
    finally:
        with admin.connect() as conn:
            conn.exec_driver_sql(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')
        admin.dispose()


def test_compare_and_campaign_follow_the_speed_unit(app, library_url):
    from sessions.units import MPH_MPS

    app.radio(key="unit_system").set_value("trade").run()
    app.selectbox(key="speed_unit").set_value("mph").run()
    _open(app, "views/compare.py")
    in_mph = _dataframe(app, "onset median")["onset median [mph]"].tolist()
    app.radio(key="unit_system").set_value("metric").run()
    app.selectbox(key="speed_unit").set_value("m/s").run()
    in_mps = _dataframe(app, "onset median")["onset median [m/s]"].tolist()
    # 1 mph = 0.447 04 m/s exactly (NIST SP 811, appendix B.9); both rounded to 0.01
    assert MPH_MPS == pytest.approx(0.44704, rel=1e-12)
    assert [v * MPH_MPS for v in in_mph] == pytest.approx(in_mps, abs=0.01)


def test_boards_page_sets_measured_onsets_beside_the_model(app, library_url):
    from sessions import compare as cmp

    _open(app, "views/boards.py")
    with Library.open(library_url) as lib:
        rides = lib.rides_frame()
        board = rides["board"].iloc[0]
        spec = lib.board_object(board)
    app.selectbox(key="load_board").set_value(board).run()
    expected = cmp.model_table(cmp.add_load_terms(rides[rides["board"] == board]), cmp.board_load_model({board: spec}))
    table = _dataframe(app, "measured onset")
    assert list(table["rider"]) == list(expected["rider"]) and len(table) > 0
    assert list(table["rides"]) == list(expected["rides"])
    assert table["measured onset [m/s]"].tolist() == pytest.approx(expected["measured_median_mps"].round(2).tolist())
    lo, hi = expected["model_lo_mps"].iloc[0], expected["model_hi_mps"].iloc[0]
    assert table["predicted band [m/s]"].iloc[0] == f"{lo:.2f}–{hi:.2f} m/s"
