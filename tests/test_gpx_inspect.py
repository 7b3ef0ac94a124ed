"""``floatlift inspect`` run in-process: text and JSON output, exit statuses."""

from __future__ import annotations

import gzip
import io
import json
import sys

import numpy as np
import pandas as pd
import pytest

from sessions.cli import main
from sessions.gpx_write import write_gpx


def _session(n: int = 600) -> pd.DataFrame:
    rng = np.random.default_rng(5)
    t = pd.Timestamp("2026-04-02T07:15:00Z") + pd.to_timedelta(np.arange(n, dtype=float), unit="s")
    t = t.delete(range(200, 290))  # a 91 s pause
    n = len(t)
    return pd.DataFrame(
        {
            "time": t,
            "lat": -38.5 + np.cumsum(rng.normal(0, 1e-5, n)),
            "lon": 145.1 + np.cumsum(rng.normal(0, 1e-5, n)),
            "ele_m": np.zeros(n),
            "speed_mps": np.where(np.arange(n) % 2 == 0, 1.5, np.nan),
            "segment": np.zeros(n, dtype=np.int32),
        }
    )


@pytest.fixture()
def track_file(tmp_path):
    path = tmp_path / "harbour-wall.gpx"
    write_gpx(_session(), path, creator="test watch")
    return path


def test_text_output(track_file, capsys):
    assert main(["inspect", str(track_file)]) == 0
    out, err = capsys.readouterr()
    assert err == ""
    assert "harbour-wall.gpx" in out
    assert "510 timed" in out
    assert "2026-04-02T07:15:00Z" in out
    assert "2026-04-02T07:24:59Z" in out
    assert "test watch" in out
    assert "1 longer than 60 s; longest 1:31" in out
    assert "255 of 510 points (50 %)" in out  # reported speed on every other point
    assert "510 of 510 points (100 %)" in out  # elevation 0 counts as present
    assert "median 1 s" in out
    labels = [line[:16].strip() for line in out.splitlines()]
    assert labels == [
        "file", "creator", "GPX version", "points", "start", "end", "span", "sampling", "segments",
        "gaps", "duplicates", "reordered", "reported speed", "elevation",
    ]


def test_json_output(track_file, capsys):
    assert main(["inspect", "--json", str(track_file)]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["schema"] == "floatlift.inspect/1"
    assert doc["file"] == "harbour-wall.gpx"
    assert doc["points"] == 510 and doc["points_in_file"] == 510
    assert doc["start_utc"] == "2026-04-02T07:15:00Z"
    assert doc["span_s"] == 599.0
    assert doc["interval_median_s"] == 1.0
    assert doc["interval_irregular_share"] == pytest.approx(1 / 509)
    assert doc["gaps"] == {"threshold_s": 60.0, "count": 1, "longest_s": 91.0, "longest_start_utc": "2026-04-02T07:18:19Z"}
    assert doc["reported_speed_points"] == 255
    assert doc["elevation_points"] == 510
    assert doc["segments"] == 1
    assert doc["duplicates_merged"] == 0 and doc["reordered"] == 0 and doc["untimed_dropped"] == 0
    assert doc["gpx_version"] == "1.1"


def test_gap_option_and_gzip(track_file, tmp_path, capsys):
    packed = tmp_path / "harbour-wall.gpx.gz"
    packed.write_bytes(gzip.compress(track_file.read_bytes()))
    assert main(["inspect", "--json", "--gap-s", "120", str(packed)]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["gaps"]["count"] == 0 and doc["file"] == "harbour-wall.gpx.gz"


def test_size_option_refuses(track_file, capsys):
    assert main(["inspect", "--max-mb", "0.001", str(track_file)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "over the" in err


def test_standard_input(track_file, capsys, monkeypatch):
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(track_file.read_bytes())))
    assert main(["inspect", "--json", "-"]) == 0
    assert json.loads(capsys.readouterr().out)["points"] == 510


@pytest.mark.parametrize(
    "content, words",
    [
        (b"", "empty file"),
        (b"\x89PNG\r\n\x1a\n\x00\x00", "not"),
        (b'<?xml version="1.0"?><gpx version="1.1"><trk><trkseg><trkpt lat="1" lon="2">', "truncated"),
        (b'<gpx version="1.1"><rte><rtept lat="1" lon="2"/></rte></gpx>', "no track points"),
        (b'<gpx version="1.1"><trk><trkseg><trkpt lat="1" lon="2"/><trkpt lat="1" lon="3"/></trkseg></trk></gpx>', "no"),
        (b'<!DOCTYPE gpx [<!ENTITY a "b">]><gpx/>', "DOCTYPE"),
    ],
)
def test_bad_files_exit_2_with_one_line(tmp_path, capsys, content, words):
    path = tmp_path / "bad.gpx"
    path.write_bytes(content)
    assert main(["inspect", str(path)]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert err.count("\n") == 1
    assert err.startswith("floatlift: error: bad.gpx: ")
    assert words in err
    assert "Traceback" not in err


def test_missing_file_and_bad_option(tmp_path, capsys):
    assert main(["inspect", str(tmp_path / "nowhere.gpx")]) == 2
    assert "no such file" in capsys.readouterr().err
    with pytest.raises(SystemExit) as info:
        main(["inspect", "--gap-s", "-5", "x.gpx"])
    assert info.value.code == 2
