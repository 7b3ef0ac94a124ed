"""The track: timed GPS fixes as read from a file, before any analysis.

Column schema of :attr:`Track.points` (one row per fix, sorted by time, unique times):

==============  ========================  ==================================================
column          dtype                     meaning
==============  ========================  ==================================================
``time``        datetime64[ns, UTC]       fix time, tz-aware UTC
``lat``         float64                   WGS84 latitude [deg]
``lon``         float64                   WGS84 longitude [deg]
``ele_m``       float64                   elevation [m]; NaN when absent (0 is data)
``speed_mps``   float64                   speed reported by the device [m/s]; NaN when absent
``segment``     int32                     0-based segment number over the whole file
                                          (each ``<trkseg>`` of each ``<trk>``, in order)
==============  ========================  ==================================================
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

COL_TIME = "time"
COL_LAT = "lat"
COL_LON = "lon"
COL_ELE = "ele_m"
COL_SPEED = "speed_mps"
COL_SEGMENT = "segment"
COLUMNS = (COL_TIME, COL_LAT, COL_LON, COL_ELE, COL_SPEED, COL_SEGMENT)

#: A pause between two fixes longer than this is recorded as a gap [s].
DEFAULT_GAP_S = 60.0


@dataclass(frozen=True)
class Gap:
    """A pause in the recording longer than the gap threshold."""

    start: pd.Timestamp  # time of the last fix before the gap (UTC)
    end: pd.Timestamp  # time of the first fix after it (UTC)

    @property
    def duration_s(self) -> float:
        return (self.end - self.start).total_seconds()


@dataclass(frozen=True)
class TrackMeta:
    """What is known about a track's origin and what the reader did to it."""

    source: str  # file name (no folders) or "<bytes>"
    sha256: str  # SHA-256 of the raw bytes, hex
    creator: str | None = None  # GPX creator attribute (device or program)
    gpx_version: str | None = None  # "1.0" or "1.1"
    n_points_raw: int = 0  # timed fixes found in the file before merging
    n_duplicates_merged: int = 0  # exact duplicate timestamps merged into one fix
    n_reordered: int = 0  # fixes that were out of time order in the file
    n_untimed_dropped: int = 0  # track points without a time, left out
    gaps: tuple[Gap, ...] = field(default_factory=tuple)
    gap_threshold_s: float = DEFAULT_GAP_S


@dataclass(frozen=True)
class Track:
    """Timed fixes (see the module docstring for the column schema) plus metadata."""

    points: pd.DataFrame
    meta: TrackMeta

    @property
    def n_points(self) -> int:
        return len(self.points)

    @property
    def start(self) -> pd.Timestamp:
        return self.points[COL_TIME].iloc[0]

    @property
    def end(self) -> pd.Timestamp:
        return self.points[COL_TIME].iloc[-1]

    @property
    def duration_s(self) -> float:
        return (self.end - self.start).total_seconds()

    @property
    def sampling_s(self) -> float:
        """Median interval between consecutive fixes [s]."""
        t = self.points[COL_TIME].to_numpy(dtype="datetime64[ns]").astype(np.int64)
        if len(t) < 2:
            return float("nan")
        return float(np.median(np.diff(t))) / 1e9

    @property
    def has_reported_speed(self) -> bool:
        return bool(self.points[COL_SPEED].notna().any())

    @property
    def has_elevation(self) -> bool:
        return bool(self.points[COL_ELE].notna().any())
