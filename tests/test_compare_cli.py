"""``floatlift compare`` in-process: a real SQLite library and a stand-in library object."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from test_compare_synth import BOARDS, RIDERS, make_library

from sessions import cli
from sessions.commands import compare as command

A, B = "Tern 6'0", "Tern 6'0 v2"
PLAN = {(A, "Marlo"): 5, (B, "Marlo"): 5, ("Petrel 6'4", "Ines"): 4, ("Skua 5'10", "Bram"): 4,
        ("Gannet 7'2", "Ottilie"): 4}
#: Invented board lengths and widths [m] for the planing model (outline from these).
DIMS = {A: (1.83, 0.49, 0.062), B: (1.83, 0.50, 0.062), "Petrel 6'4": (1.93, 0.52, 0.068),
        "Skua 5'10": (1.78, 0.48, 0.060), "Gannet 7'2": (2.18, 0.55, 0.072)}


def _analysis(sess: pd.Series, rides: pd.DataFrame) -> dict:
    t0 = sess.start
    end = t0 + pd.Timedelta(seconds=sess.duration_s)
    ride_list = []
    for r in rides.itertuples():
        ride_list.append({
            "index": int(r.ride_index), "catch_start": None, "start": r.start.isoformat(),
            "end": (r.start + pd.Timedelta(milliseconds=int(round(r.duration_s * 1000)))).isoformat(), "duration_s": r.duration_s,
            "distance_m": r.distance_m, "peak_speed_mps": r.peak_speed_mps, "mean_speed_mps": r.mean_speed_mps,
            "onset_speed_mps": r.onset_speed_mps, "onset_ci_mps": [r.onset_ci_lo_mps, r.onset_ci_hi_mps],
        })
    return {
        "schema": "floatlift.analysis/1",
        "source": {"file": f"{sess.session_id}.gpx", "points": 5400, "sampling_s": 1.0},
        "session": {"start": t0.isoformat(), "end": end.isoformat(), "duration_s": sess.duration_s,
                    "time_in_state_s": {"paddle": sess.time_paddle_s, "wait": sess.time_wait_s,
                                        "ride": sess.time_ride_s},
                    "rides": int(sess.rides), "missed_waves": int(sess.missed_waves),
                    "rides_per_hour": sess.rides_per_hour},
        "rides": ride_list,
        "states": [],
    }


@pytest.fixture(scope="module")
def library_url(tmp_path_factory):
    """A SQLite library holding the synthetic sessions (board B planes 0.45 m/s earlier)."""
    from sessions.store import Library

    rides, sessions = make_library(PLAN, board_effect_mps={B: -0.45}, seed=17)
    url = f"sqlite:///{tmp_path_factory.mktemp('lib') / 'library.sqlite'}"
    with Library.open(url) as lib:
        for name, (body, gear) in RIDERS.items():
            lib.add_rider(name, body_mass_kg=body, gear_mass_kg=gear,
                          measured_at=pd.Timestamp("2026-01-01", tz="UTC").to_pydatetime())
        for name, (vol, area, mass, model, version) in BOARDS.items():
            length, width, thick = DIMS[name]
            lib.add_board(name, model=model, version=version, length_m=length, width_m=width, thickness_m=thick,
                          volume_l=vol, planform_area_m2=area, mass_kg=mass)
        for sess in sessions.itertuples(index=False):
            s = pd.Series(sess._asdict())
            lib.store_session(
                _analysis(s, rides[rides.session_id == s.session_id]), f"<gpx><!-- {s.session_id} --></gpx>".encode(),
                analysis_version="test", rider=s.rider, board=s.board,
                conditions={"wave_face_m": s.wave_face_m, "period_s": s.period_s},
                feedback={"score_paddling": s.score_paddling, "score_catching": s.score_catching,
                          "score_speed": s.score_speed, "score_control": s.score_control, "note": s.feedback_note},
            )
    return url


def _run(capsys, *argv):
    status = cli.main(["compare", *argv])
    out, err = capsys.readouterr()
    return status, out, err


def test_json_output_from_a_real_library(library_url, capsys):
    status, out, err = _run(capsys, "--board", A, "--board", B, "--db", library_url, "--json", "--resamples", "999")
    assert status == 0, err
    doc = json.loads(out)
    assert [b["board"] for b in doc["boards"]] == [A, B]
    assert doc["boards"][0]["rides"] > 0 and isinstance(doc["boards"][0]["rides"], int)
    onset = next(d for d in doc["differences"] if d["metric"] == "onset_speed_mps")
    assert onset["verdict"] == "B lower" and onset["ci"][1] < 0 and 0 <= onset["p_value"] < 0.05
    # the model band comes from the load figures of the stored boards
    assert all(b["model_onset_band_mps"] is not None for b in doc["boards"])
    assert doc["load_fit"] is not None and "lifeguards" in doc["caution"]


def test_terminal_table_and_report(library_url, capsys, tmp_path):
    status, out, err = _run(capsys, "--board", A, B, "--db", library_url, "--resamples", "999",
                            "--report", str(tmp_path / "rep"))
    assert status == 0, err
    assert "Board comparison" in out and f"{B} lower than {A}" in out
    assert "Measured onset against the planing model" in out
    assert "at least 8 rides from 4 sessions per board" in out
    assert "surf within your ability" in out
    assert sorted(p.name for p in (tmp_path / "rep").iterdir()) == sorted(
        ["onset_by_board.png", "onset_vs_loading.png", "rides_per_hour.png", "summary.pdf"])


def test_filters_reach_the_comparison(library_url, capsys):
    status, out, _ = _run(capsys, "--board", A, B, "--db", library_url, "--json", "--resamples", "199",
                          "--rider", "Marlo", "--wave-band", "0.5-1.2", "--from", "2026-03-01", "--to", "2026-12-31")
    assert status == 0
    doc = json.loads(out)
    assert doc["selection"]["riders"] == ["Marlo"] and doc["selection"]["wave_band_m"] == [0.5, 1.2]
    assert doc["selection"]["date_to"].startswith("2027-01-01")  # --to is inclusive
    assert doc["boards"][0]["rides"] < 30  # the wave band removed rides


def test_campaign_view(library_url, capsys):
    status, out, err = _run(capsys, "--model", "Tern", "--db", library_url)
    assert status == 0, err
    assert "Test rides of board model Tern" in out and "v1" in out and "v2" in out
    assert "Marlo on Tern 6'0 v2" in out and "lifeguards" in out
    status, out, _ = _run(capsys, "--model", "Tern", "--db", library_url, "--json")
    doc = json.loads(out)
    assert {r["board_version"] for r in doc["rows"]} == {"v1", "v2"}


@pytest.mark.parametrize("argv, message", [
    (["--board", A], "at least two boards"),
    (["--board", A, B, "--model", "Tern"], "not both"),
    (["--board", A, "Albatross"], "Albatross"),
    (["--board", A, B, "--wave-band", "2-1"], "wave band"),
    (["--board", A, B, "--from", "March"], "YYYY-MM-DD"),
    (["--board", A, B, "--from", "2026-05-01", "--to", "2026-04-01"], "before"),
    (["--board", A, B, "--rider", "Nobody"], "Nobody"),
    (["--model", "Kittiwake"], "Kittiwake"),
])
def test_bad_input_is_one_line_and_exit_2(library_url, capsys, argv, message):
    status, out, err = _run(capsys, *argv, "--db", library_url)
    assert status == 2
    assert err.count("\n") == 1 and err.startswith("floatlift: error:") and message in err
    assert "Traceback" not in err


class _StandInLibrary:
    """Only what the command reads: the two frames and board records."""

    def __init__(self, rides, sessions):
        self._rides, self._sessions = rides, sessions

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return None

    def rides_frame(self, **kw):
        return self._rides

    def sessions_frame(self, **kw):
        return self._sessions

    def board(self, name):
        length, width, thick = DIMS[name]
        vol, area, mass, model, version = BOARDS[name]
        return {"name": name, "length_m": length, "width_m": width, "thickness_m": thick, "volume_l": vol,
                "mass_kg": mass, "model": model, "version": version}


def test_json_is_strict_when_values_are_missing(monkeypatch, capsys):
    rides, sessions = make_library({(A, "Marlo"): 2, (B, "Marlo"): 2}, seed=1)
    rides = rides.assign(onset_speed_mps=np.nan)
    monkeypatch.setattr(command, "_open_library", lambda url: _StandInLibrary(rides, sessions))
    status, out, _ = _run(capsys, "--board", A, B, "--json", "--resamples", "199")
    assert status == 0
    assert "NaN" not in out
    doc = json.loads(out)
    assert {d["verdict"] for d in doc["differences"]} == {"too few data to tell"}
    assert doc["boards"][0]["onset_speed_mps"]["median"] is None


def test_report_folder_problem_is_a_clear_error(monkeypatch, capsys, tmp_path):
    rides, sessions = make_library({(A, "Marlo"): 4, (B, "Marlo"): 4}, seed=1)
    monkeypatch.setattr(command, "_open_library", lambda url: _StandInLibrary(rides, sessions))
    blocker = tmp_path / "file"
    blocker.write_text("x")
    status, _, err = _run(capsys, "--board", A, B, "--report", str(blocker / "sub"), "--resamples", "199")
    assert status == 2 and "report folder" in err


def test_parse_day_and_board_record():
    assert command.parse_day("2026-03-05", "from").isoformat() == "2026-03-05T00:00:00+00:00"
    board = command.board_from_library({"name": A, "length_m": 1.83, "width_m": 0.49, "volume_l": 30.0})
    assert board.outline is not None and board.outline.length_m == pytest.approx(1.83)
    assert command.board_from_library({"name": A, "volume_l": 30.0}).outline is None


def test_library_url_comes_from_the_environment(library_url, capsys, monkeypatch):
    # no --db: the store's own resolution ($FLOATLIFT_DB) picks the library
    monkeypatch.setenv("FLOATLIFT_DB", library_url)
    status, out, err = _run(capsys, "--model", "Tern", "--json")
    assert status == 0, err
    assert json.loads(out)["rows"]
