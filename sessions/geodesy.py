"""Local metric frame for a surf session: WGS84 latitude/longitude to east/north metres.

A session covers a few kilometres at most, so every fix is mapped to the local tangent
plane (east, north, up) at a reference point near the middle of the track, through
Earth-centred Earth-fixed (ECEF) Cartesian coordinates on the WGS84 ellipsoid. The
horizontal (east, north) pair is kept; the "up" offset (the Earth's curvature, about
2 m at 5 km) is dropped.

Accuracy: distances measured in this frame between any two points within about 5 km
of the reference agree with the geodesic distance on the ellipsoid (Karney 2013) to
better than 1e-6 relative; ``tests/test_geodesy.py`` checks this against geographiclib.
That is four orders of magnitude below the noise of a consumer GPS fix.

References
----------
.. [1] C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87:43-55 (2013),
       doi:10.1007/s00190-012-0578-z (geodesic distance used as the reference).
.. [2] NIMA TR8350.2, "Department of Defense World Geodetic System 1984", 3rd ed.
       (2000), table 3.1: a = 6378137 m, 1/f = 298.257223563.
.. [3] B. Hofmann-Wellenhof, H. Lichtenegger, E. Wasle, "GNSS - Global Navigation
       Satellite Systems", Springer (2008), sections 10.2.1 (ellipsoidal to Cartesian
       coordinates) and 10.2.3 (local-level frame) (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

WGS84_A_M = 6378137.0  # semi-major axis [m], NIMA TR8350.2 table 3.1
WGS84_F = 1.0 / 298.257223563  # flattening, NIMA TR8350.2 table 3.1
WGS84_E2 = WGS84_F * (2.0 - WGS84_F)  # first eccentricity squared


def geodetic_to_ecef(lat_deg, lon_deg, h_m=0.0):
    """WGS84 geodetic coordinates to ECEF Cartesian coordinates.

    Parameters
    ----------
    lat_deg, lon_deg : array_like
        Geodetic latitude and longitude [deg].
    h_m : array_like, optional
        Height above the ellipsoid [m].

    Returns
    -------
    x_m, y_m, z_m : ndarray
        ECEF coordinates [m].

    Notes
    -----
    ``N = a / sqrt(1 - e^2 sin^2 phi)`` (prime-vertical radius of curvature);
    ``X = (N + h) cos phi cos lambda``, ``Y = (N + h) cos phi sin lambda``,
    ``Z = (N (1 - e^2) + h) sin phi`` [3]_.
    """
    phi = np.radians(np.asarray(lat_deg, dtype=float))
    lam = np.radians(np.asarray(lon_deg, dtype=float))
    h = np.asarray(h_m, dtype=float)
    sin_phi = np.sin(phi)
    cos_phi = np.cos(phi)
    n_m = WGS84_A_M / np.sqrt(1.0 - WGS84_E2 * sin_phi * sin_phi)
    x = (n_m + h) * cos_phi * np.cos(lam)
    y = (n_m + h) * cos_phi * np.sin(lam)
    z = (n_m * (1.0 - WGS84_E2) + h) * sin_phi
    return x, y, z


@dataclass(frozen=True)
class LocalFrame:
    """East/north tangent plane at a reference point (``lat0_deg``, ``lon0_deg``)."""

    lat0_deg: float
    lon0_deg: float

    @classmethod
    def around(cls, lat_deg, lon_deg) -> LocalFrame:
        """Frame centred on the middle of the bounding box of the given points.

        The longitude centre is taken on the shorter arc, so a session across the
        antimeridian is centred correctly.
        """
        lat = np.asarray(lat_deg, dtype=float)
        lon = np.asarray(lon_deg, dtype=float)
        if lat.size == 0:
            raise ValueError("no points to centre a local frame on")
        lat0 = 0.5 * (float(np.min(lat)) + float(np.max(lat)))
        # longitudes relative to the first one, wrapped to [-180, 180)
        rel = (lon - lon[0] + 180.0) % 360.0 - 180.0
        lon0 = float(lon[0]) + 0.5 * (float(np.min(rel)) + float(np.max(rel)))
        lon0 = (lon0 + 180.0) % 360.0 - 180.0
        return cls(lat0, lon0)

    def to_local(self, lat_deg, lon_deg):
        """Latitude/longitude [deg] to east ``x_m`` and north ``y_m`` [m] in this frame.

        Notes
        -----
        ``e = -sin(lam0) dX + cos(lam0) dY``;
        ``n = -sin(phi0) cos(lam0) dX - sin(phi0) sin(lam0) dY + cos(phi0) dZ``,
        with ``(dX, dY, dZ)`` the ECEF offset from the reference point [3]_.
        """
        x, y, z = geodetic_to_ecef(lat_deg, lon_deg)
        x0, y0, z0 = geodetic_to_ecef(self.lat0_deg, self.lon0_deg)
        dx, dy, dz = x - x0, y - y0, z - z0
        phi0 = np.radians(self.lat0_deg)
        lam0 = np.radians(self.lon0_deg)
        sp, cp = np.sin(phi0), np.cos(phi0)
        sl, cl = np.sin(lam0), np.cos(lam0)
        east = -sl * dx + cl * dy
        north = -sp * cl * dx - sp * sl * dy + cp * dz
        return east, north


def local_distance_m(lat1_deg, lon1_deg, lat2_deg, lon2_deg):
    """Distance [m] between two points through a local frame at the first point.

    Meant for short lines (up to a few kilometres); see the module docstring for its
    accuracy against the ellipsoidal geodesic.
    """
    frame = LocalFrame(float(lat1_deg), float(lon1_deg))
    east, north = frame.to_local(lat2_deg, lon2_deg)
    return np.hypot(east, north)
