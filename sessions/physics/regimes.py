"""Froude numbers, the "hull speed" rule and the speed regimes of a planing hull.

Definitions (V speed [m/s], g gravity [m/s^2]):

* length Froude number ``Fn_L = V / sqrt(g * L)`` with ``L`` the waterline length;
* beam Froude number (Savitsky's speed coefficient) ``Cv = V / sqrt(g * b)``;
* volumetric Froude number ``Fn_vol = V / sqrt(g * vol**(1/3))`` with ``vol`` the
  displaced volume at rest [m^3].

References
----------
Radojcic, D., Zgradic, A., Kalajdzic, M. and Simic, A., 2014: Resistance prediction for
hard chine hulls in the pre-planing regime. *Polish Maritime Research* 21(2), 9-26
(Introduction: planing hulls beat displacement hulls above Fn_vol of about 1; full planing
from Fn_vol of about 3).
Savitsky, D., 2003: On the subject of high-speed monohulls. SNAME Greek Section
(Fn_vol < 1 displacement, 1-3 semi-displacement / pre-planing, > 3 planing; from memory).
"""

from __future__ import annotations

import math

from sessions.units import FT_M, G_N, KN_MPS

#: Traditional "hull speed" rule: V [knots] = 1.34 * sqrt(LWL [feet]) (speed-length
#: ratio 1.34; traditional naval-architecture rule of thumb). As a length Froude
#: number this is 1.34 * KN_MPS / sqrt(g * FT_M) = 0.39873.
HULL_SPEED_RATIO_KN_SQRT_FT = 1.34
HULL_SPEED_FROUDE = HULL_SPEED_RATIO_KN_SQRT_FT * KN_MPS / math.sqrt(G_N * FT_M)

#: Boundaries of the volumetric Froude number bands (Savitsky 2003; Radojcic et al. 2014).
PRE_PLANING_FROUDE_VOL = 1.0
PLANING_FROUDE_VOL = 3.0

#: Names of the regimes returned by :func:`regime_from_froude_vol`.
REGIMES = ("displacement", "pre-planing", "planing")


def _positive(name: str, value: float) -> float:
    value = float(value)
    if not math.isfinite(value) or value <= 0.0:
        raise ValueError(f"{name} must be a positive finite number, got {value!r}")
    return value


def froude_length(speed_mps: float, length_m: float, g_mps2: float = G_N) -> float:
    """Length Froude number ``V / sqrt(g L)`` [-]."""
    return float(speed_mps) / math.sqrt(g_mps2 * _positive("length_m", length_m))


def froude_beam(speed_mps: float, beam_m: float, g_mps2: float = G_N) -> float:
    """Beam Froude number, Savitsky's speed coefficient ``Cv = V / sqrt(g b)`` [-]."""
    return float(speed_mps) / math.sqrt(g_mps2 * _positive("beam_m", beam_m))


def froude_volume(speed_mps: float, displaced_volume_m3: float, g_mps2: float = G_N) -> float:
    """Volumetric Froude number ``V / sqrt(g vol^(1/3))`` [-]."""
    return float(speed_mps) / math.sqrt(g_mps2 * _positive("displaced_volume_m3", displaced_volume_m3) ** (1.0 / 3.0))


def speed_for_froude_volume(froude_vol: float, displaced_volume_m3: float, g_mps2: float = G_N) -> float:
    """Speed [m/s] at which the volumetric Froude number equals ``froude_vol``."""
    return float(froude_vol) * math.sqrt(g_mps2 * _positive("displaced_volume_m3", displaced_volume_m3) ** (1.0 / 3.0))


def hull_speed_mps(waterline_length_m: float, froude: float = HULL_SPEED_FROUDE, g_mps2: float = G_N) -> float:
    """Displacement-mode speed limit [m/s] by the "hull speed" rule.

    Parameters
    ----------
    waterline_length_m : float
        Waterline length [m]. For a surfboard the floating length; the board's overall
        length gives an upper estimate (rocker lifts the ends).
    froude : float
        Length Froude number of the limit; default 0.39873, i.e. 1.34 kn per sqrt(ft).

    Notes
    -----
    ``V = Fn_L * sqrt(g L)``. A displacement hull's bow and stern waves have the
    hull's length as wavelength near this speed; going faster means climbing its own
    bow wave, which only planing hulls do with reasonable power.

    Examples
    --------
    >>> round(hull_speed_mps(6 * 0.3048), 4)
    1.6886
    """
    return _positive("froude", froude) * math.sqrt(g_mps2 * _positive("waterline_length_m", waterline_length_m))


def regime_from_froude_vol(froude_vol: float) -> str:
    """Name of the speed regime for a volumetric Froude number (see :data:`REGIMES`)."""
    if froude_vol < PRE_PLANING_FROUDE_VOL:
        return "displacement"
    if froude_vol < PLANING_FROUDE_VOL:
        return "pre-planing"
    return "planing"
