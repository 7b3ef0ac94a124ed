"""GPX files written by other programs (the shared ``foreign_gpx`` folder, read in place).

Every file either imports or is refused with a specific TrackReadError subclass; imported
files agree with an independent reader (gpxpy) on point counts, coordinates, elevations
and times, and both of floatlift's extraction paths give the same track.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import gpxpy
import numpy as np
import pandas as pd
import pytest

from sessions.errors import (
    DataQualityWarning,
    NoTimestampsError,
    NoTrackPointsError,
    TooFewPointsError,
    TrackReadError,
)
from sessions.gpx import read_gpx

# refusals expected for particular files (all others must import)
EXPECTED_REFUSALS = {
    "cerknicko-without-times.gpx": None,  # 5 timed points of 296: imports
    "route.gpx": NoTrackPointsError,
    "track-with-extremes.gpx": NoTimestampsError,
    "track-with-small-floats.gpx": NoTimestampsError,
    "track_with_dilution_errors.gpx": NoTimestampsError,
    "unicode_with_bom.gpx": NoTrackPointsError,  # a waypoint only: read past the BOM
    "gpx1.0_with_all_fields.gpx": TooFewPointsError,
}


def _files(folder: Path) -> list[Path]:
    files = sorted(folder.glob("*.gpx"))
    assert files, "the foreign GPX folder is empty"
    return files


def _read(path: Path, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DataQualityWarning)  # e.g. a clock before 1980
        return read_gpx(path, **kw)


def test_every_file_imports_or_is_refused_specifically(foreign_gpx_dir):
    outcomes = {}
    for path in _files(foreign_gpx_dir):
        try:
            track = _read(path)
        except TrackReadError as exc:
            assert type(exc) is not TrackReadError, f"{path.name}: refused with the base class"
            assert str(exc).startswith(path.name + ": ")
            assert "\n" not in str(exc)
            outcomes[path.name] = type(exc)
        else:
            assert track.n_points >= 2
            outcomes[path.name] = None
    for name, expected in EXPECTED_REFUSALS.items():
        assert outcomes[name] is expected, f"{name}: {outcomes[name]} instead of {expected}"
    assert sum(v is None for v in outcomes.values()) >= 8  # most real tracks import


def test_known_facts(foreign_gpx_dir):
    speed = _read(foreign_gpx_dir / "track_with_speed.gpx")
    # speed values written in the file: 1.2, 2.2, 3.2 (m/s)
    assert speed.points["speed_mps"].tolist() == [1.2, 2.2, 3.2]
    assert speed.has_reported_speed

    with pytest.raises(NoTimestampsError, match="none of the 25 track points has a <time>"):
        read_gpx(foreign_gpx_dir / "track-with-extremes.gpx")
    with pytest.raises(NoTrackPointsError, match="route points"):
        read_gpx(foreign_gpx_dir / "route.gpx")
    with pytest.raises(NoTrackPointsError, match="1 waypoint"):
        read_gpx(foreign_gpx_dir / "unicode_with_bom.gpx")

    partial = _read(foreign_gpx_dir / "cerknicko-without-times.gpx")
    assert partial.meta.n_untimed_dropped == 291 and partial.n_points == 5

    no_ele = _read(foreign_gpx_dir / "cerknicko-jezero-without-elevations.gpx")
    assert not no_ele.has_elevation
    zero_ele = _read(foreign_gpx_dir / "cerknicko-jezero-with-elevations-zero.gpx")
    assert zero_ele.has_elevation and (zero_ele.points["ele_m"] == 0).any()  # 0 is data

    offsets = _read(foreign_gpx_dir / "track-with-less-sec-time.gpx")
    # 15:43:13.994+01:00 is 14:43:13.994 UTC
    assert offsets.end == pd.Timestamp("2015-12-11T14:43:13.994Z")

    empty_segment = _read(foreign_gpx_dir / "track-with-empty-segment.gpx")
    assert empty_segment.n_points == 9


def _gpxpy_points(path: Path):
    with open(path, encoding="utf-8-sig") as fh:
        g = gpxpy.parse(fh)
    return [p for t in g.tracks for s in t.segments for p in s.points]


def test_agrees_with_gpxpy_on_every_importable_file(foreign_gpx_dir):
    checked = 0
    for path in _files(foreign_gpx_dir):
        try:
            track = _read(path)
        except TrackReadError:
            continue
        theirs = [p for p in _gpxpy_points(path) if p.time is not None]
        assert len(theirs) == track.meta.n_points_raw, path.name
        # sort gpxpy's timed points as floatlift does (stable by time, first of equal times)
        times = pd.to_datetime([p.time for p in theirs], utc=True)
        frame = pd.DataFrame(
            {
                "t": times.as_unit("ns"),
                "lat": [p.latitude for p in theirs],
                "lon": [p.longitude for p in theirs],
                "ele": [np.nan if p.elevation is None else p.elevation for p in theirs],
            }
        )
        ours = track.points
        if track.meta.n_duplicates_merged == 0 and track.meta.n_reordered == 0:
            np.testing.assert_array_equal(frame["lat"], ours["lat"], err_msg=path.name)
            np.testing.assert_array_equal(frame["lon"], ours["lon"], err_msg=path.name)
            np.testing.assert_array_equal(frame["ele"], ours["ele_m"], err_msg=path.name)
            # gpxpy keeps microseconds; floatlift keeps nanoseconds
            diff = (pd.DatetimeIndex(ours["time"]) - pd.DatetimeIndex(frame["t"])).to_numpy()
            assert np.abs(diff.astype("int64")).max() < 1000, path.name
        else:
            ours_xy = set(zip(ours["lat"], ours["lon"]))
            assert ours_xy <= set(zip(frame["lat"], frame["lon"])), path.name
        checked += 1
    assert checked >= 8


def test_fast_and_careful_paths_agree_on_every_importable_file(foreign_gpx_dir):
    for path in _files(foreign_gpx_dir):
        try:
            careful = _read(path, _path="careful")
        except TrackReadError as exc:
            with pytest.raises(type(exc)):
                _read(path)
            continue
        auto = _read(path)
        pd.testing.assert_frame_equal(auto.points, careful.points)
        assert auto.meta == careful.meta
