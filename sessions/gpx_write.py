"""Writing tracks as GPX 1.1 (used by the simulator, the tests and exports).

The writer is the inverse of :func:`sessions.gpx.read_gpx` for the columns of the track
schema (:mod:`sessions.track`): times are written in UTC with a ``Z`` suffix and as many
fractional-second digits as needed (up to microseconds), coordinates with 7 decimals by
default (about 1 cm), elevation when present, and reported speed as a ``<speed>`` element inside
the point's ``<extensions>`` in a floatlift namespace. A new ``<trkseg>`` starts whenever the
``segment`` column changes.
"""

from __future__ import annotations

import io
from typing import BinaryIO
from xml.sax.saxutils import escape, quoteattr

import numpy as np
import pandas as pd

from sessions.track import COL_ELE, COL_LAT, COL_LON, COL_SEGMENT, COL_SPEED, COL_TIME

GPX_NS = "http://www.topografix.com/GPX/1/1"
FLOATLIFT_NS = "https://floatlift.invalid/xmlns/track/1"


def _iso_times(times: pd.Series) -> list[str]:
    ns = times.dt.tz_convert("UTC").to_numpy(dtype="datetime64[ns]")
    out = []
    for value in np.datetime_as_string(ns, unit="us"):
        head, frac = value.split(".")
        frac = frac.rstrip("0")
        out.append(f"{head}.{frac}Z" if frac else f"{head}Z")
    return out


def write_gpx(
    points: pd.DataFrame,
    dest: str | BinaryIO | None = None,
    *,
    name: str | None = None,
    creator: str = "floatlift",
    decimals: int = 7,
) -> bytes:
    """Write track points (track schema columns) as a GPX 1.1 document.

    Parameters
    ----------
    points : DataFrame
        At least ``time`` (tz-aware), ``lat`` and ``lon``; ``ele_m``, ``speed_mps`` and
        ``segment`` are used when present (NaN values are left out).
    dest : path or binary file, optional
        Where to write; the bytes are returned in any case.
    name : str, optional
        Track name.
    creator : str
        The GPX ``creator`` attribute.
    decimals : int
        Decimals of latitude and longitude (7 is about 1 cm; 9 about 0.1 mm).

    Returns
    -------
    bytes
        The UTF-8 encoded document.
    """
    times = _iso_times(points[COL_TIME])
    lat = points[COL_LAT].to_numpy(dtype=float)
    lon = points[COL_LON].to_numpy(dtype=float)
    n = len(points)
    ele = points[COL_ELE].to_numpy(dtype=float) if COL_ELE in points else np.full(n, np.nan)
    spd = points[COL_SPEED].to_numpy(dtype=float) if COL_SPEED in points else np.full(n, np.nan)
    seg = points[COL_SEGMENT].to_numpy() if COL_SEGMENT in points else np.zeros(n, dtype=int)

    buf = io.StringIO()
    w = buf.write
    w('<?xml version="1.0" encoding="UTF-8"?>\n')
    w(f'<gpx version="1.1" creator={quoteattr(creator)} xmlns="{GPX_NS}" xmlns:fl="{FLOATLIFT_NS}">\n')
    w("<trk>\n")
    if name:
        w(f"<name>{escape(name)}</name>\n")
    w("<trkseg>\n")
    for i in range(n):
        if i > 0 and seg[i] != seg[i - 1]:
            w("</trkseg>\n<trkseg>\n")
        w(f'<trkpt lat="{lat[i]:.{decimals}f}" lon="{lon[i]:.{decimals}f}">')
        if not np.isnan(ele[i]):
            w(f"<ele>{ele[i]:.3f}</ele>")
        w(f"<time>{times[i]}</time>")
        if not np.isnan(spd[i]):
            w(f"<extensions><fl:speed>{spd[i]:.3f}</fl:speed></extensions>")
        w("</trkpt>\n")
    w("</trkseg>\n</trk>\n</gpx>\n")
    data = buf.getvalue().encode("utf-8")
    if dest is not None:
        if isinstance(dest, (str, bytes)) or hasattr(dest, "__fspath__"):
            with open(dest, "wb") as fh:
                fh.write(data)
        else:
            dest.write(data)
    return data
