"""Distances along an imported track, checked against geodesics on the WGS84 ellipsoid.

Reference: C. F. F. Karney (2013), "Algorithms for geodesics", Journal of Geodesy 87:43-55,
as implemented in geographiclib (``Geodesic.WGS84``). A track is laid out with the direct
problem (known step lengths and azimuths), written as GPX, read back, and the inverse
problem on the imported coordinates must return the same steps.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from geographiclib.geodesic import Geodesic

from sessions.gpx import read_gpx
from sessions.gpx_write import write_gpx

WGS84 = Geodesic.WGS84


def _laid_out_track(start_lat: float, start_lon: float, steps_m: np.ndarray, azimuths_deg: np.ndarray) -> pd.DataFrame:
    lat, lon = [start_lat], [start_lon]
    for s, azi in zip(steps_m, azimuths_deg):
        g = WGS84.Direct(lat[-1], lon[-1], float(azi), float(s))  # Karney (2013), direct problem
        lat.append(g["lat2"])
        lon.append(g["lon2"])
    n = len(lat)
    return pd.DataFrame(
        {
            "time": pd.Timestamp("2026-03-14T06:30:00Z") + pd.to_timedelta(np.arange(n), unit="s"),
            "lat": lat,
            "lon": lon,
        }
    )


def _imported_steps(track) -> np.ndarray:
    lat = track.points["lat"].to_numpy()
    lon = track.points["lon"].to_numpy()
    return np.array(
        [WGS84.Inverse(lat[i], lon[i], lat[i + 1], lon[i + 1])["s12"] for i in range(len(lat) - 1)]
    )  # Karney (2013), inverse problem


def test_steps_and_total_distance_survive_import():
    rng = np.random.default_rng(2026)
    steps = rng.uniform(0.5, 12.0, 400)  # paddling to riding, 1 Hz
    azimuths = np.cumsum(rng.normal(0.0, 25.0, 400)) % 360.0
    laid = _laid_out_track(-38.49, 145.11, steps, azimuths)
    track = read_gpx(write_gpx(laid, decimals=9))
    got = _imported_steps(track)
    # 9 decimals of a degree are at most 0.06 mm of rounding per coordinate, so each
    # step moves by well under 1 mm (geographiclib WGS84, Karney 2013)
    np.testing.assert_allclose(got, steps, rtol=0, atol=1e-3)
    assert abs(got.sum() - steps.sum()) < 0.05  # total over 400 steps, metres


def test_steps_near_the_antimeridian_and_high_latitude():
    rng = np.random.default_rng(7)
    steps = rng.uniform(1.0, 8.0, 120)
    azimuths = rng.uniform(0.0, 360.0, 120)
    laid = _laid_out_track(-54.7, 179.99995, steps, azimuths)  # crosses 180 degrees
    laid["lon"] = ((laid["lon"] + 180.0) % 360.0) - 180.0
    track = read_gpx(write_gpx(laid, decimals=9))
    np.testing.assert_allclose(_imported_steps(track), steps, rtol=0, atol=1e-3)


def test_seven_decimals_hold_centimetres():
    # the writer's default (7 decimals) rounds each coordinate by at most 5e-8 degrees,
    # about 5.6 mm of latitude (WGS84 meridian arc of 1 degree is about 111.1 km)
    rng = np.random.default_rng(11)
    steps = rng.uniform(2.0, 10.0, 200)
    azimuths = rng.uniform(0.0, 360.0, 200)
    laid = _laid_out_track(33.61, -117.93, steps, azimuths)
    track = read_gpx(write_gpx(laid))
    np.testing.assert_allclose(_imported_steps(track), steps, rtol=0, atol=0.02)
