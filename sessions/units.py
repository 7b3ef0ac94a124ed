"""Unit constants and conversions used at the edges (parsers and formatters).

The core works in SI: m, s, m/s, kg, N, m^3, kg/m^3. The names below say which way a
factor goes: ``FT_M`` is metres per foot, so ``length_m = length_ft * FT_M``.
All factors are exact by definition (international yard and pound agreement, 1959;
the international knot, 1852 m per hour).
"""

from __future__ import annotations

G_N = 9.80665  # standard acceleration of gravity [m/s^2], CGPM 1901 (exact)
FT_M = 0.3048  # metres per international foot (exact)
IN_M = 0.0254  # metres per inch (exact)
LB_KG = 0.45359237  # kilograms per avoirdupois pound (exact)
KN_MPS = 1852.0 / 3600.0  # metres per second per knot (exact)
KMH_MPS = 1000.0 / 3600.0  # metres per second per km/h (exact)
MPH_MPS = 1609.344 / 3600.0  # metres per second per mile per hour (exact)
L_M3 = 1.0e-3  # cubic metres per litre (exact)


def mps_to_kmh(speed_mps: float) -> float:
    """Speed [m/s] to km/h."""
    return speed_mps / KMH_MPS


def mps_to_knots(speed_mps: float) -> float:
    """Speed [m/s] to knots."""
    return speed_mps / KN_MPS


def mps_to_mph(speed_mps: float) -> float:
    """Speed [m/s] to miles per hour."""
    return speed_mps / MPH_MPS


def kg_to_lb(mass_kg: float) -> float:
    """Mass [kg] to pounds."""
    return mass_kg / LB_KG


def m_to_ft(length_m: float) -> float:
    """Length [m] to feet."""
    return length_m / FT_M


def m_to_in(length_m: float) -> float:
    """Length [m] to inches."""
    return length_m / IN_M
