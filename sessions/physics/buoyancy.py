"""Static buoyancy of a board and how it shares the load with the rider (Archimedes).

All functions are pure and work in SI: volumes in m^3, masses in kg, forces in N,
densities in kg/m^3.

Conventions
-----------
*Flotation mass* is the mass of water a fully submerged board displaces, ``rho * V``
[kg]; it is the "kilograms of lift" a board gives and does not depend on ``g``.

*Lifted share* is the share of the total weight (rider + gear + board) carried by the
fully submerged board's buoyancy: ``rho * V / (m_rider + m_gear + m_board)``. The rider's
body is taken as neutrally buoyant (its own displacement carries it once submerged),
so what the board adds is its whole displacement; a lighter board raises the share
only through the total in the denominator.

References
----------
Archimedes, *On Floating Bodies*, Book I, Proposition 7 (the buoyant force equals the
weight of the displaced fluid). Any naval-architecture text, e.g. Tupper, E. C., 2013:
*Introduction to Naval Architecture*, 5th ed., ch. 3.
"""

from __future__ import annotations

import math

from sessions.units import G_N


def _positive(name: str, value: float) -> float:
    value = float(value)
    if not math.isfinite(value) or value <= 0.0:
        raise ValueError(f"{name} must be a positive finite number, got {value!r}")
    return value


def _non_negative(name: str, value: float) -> float:
    value = float(value)
    if not math.isfinite(value) or value < 0.0:
        raise ValueError(f"{name} must be a non-negative finite number, got {value!r}")
    return value


def flotation_mass_kg(volume_m3: float, density_kg_m3: float) -> float:
    """Mass of water displaced by a fully submerged volume [kg]: ``rho * V``.

    Parameters
    ----------
    volume_m3 : float
        Submerged volume [m^3].
    density_kg_m3 : float
        Water density [kg/m^3].

    Examples
    --------
    >>> round(flotation_mass_kg(0.030, 999.1026), 3)
    29.973
    """
    return _non_negative("volume_m3", volume_m3) * _positive("density_kg_m3", density_kg_m3)


def buoyant_force_n(volume_m3: float, density_kg_m3: float, g_mps2: float = G_N) -> float:
    """Buoyant force on a submerged volume [N]: ``F_B = rho * g * V`` (Archimedes).

    Parameters
    ----------
    volume_m3 : float
        Submerged volume [m^3].
    density_kg_m3 : float
        Water density [kg/m^3].
    g_mps2 : float
        Acceleration of gravity [m/s^2]; default standard gravity 9.80665 (CGPM 1901).

    Examples
    --------
    >>> round(buoyant_force_n(0.030, 999.1026), 2)
    293.94
    """
    return flotation_mass_kg(volume_m3, density_kg_m3) * _positive("g_mps2", g_mps2)


def displaced_volume_m3(mass_kg: float, density_kg_m3: float) -> float:
    """Volume of water a floating body of mass ``mass_kg`` displaces [m^3]: ``m / rho``."""
    return _non_negative("mass_kg", mass_kg) / _positive("density_kg_m3", density_kg_m3)


def submerged_fraction(mass_kg: float, volume_m3: float, density_kg_m3: float) -> float:
    """Fraction of a body's volume under water when it floats freely: ``m / (rho * V)``.

    A value above 1 means the body sinks (its weight exceeds its full buoyancy); the
    value is returned as it is so the caller can say so.

    Examples
    --------
    >>> round(submerged_fraction(3.0, 0.030, 1000.0), 3)
    0.1
    """
    return _non_negative("mass_kg", mass_kg) / flotation_mass_kg(
        _positive("volume_m3", volume_m3), density_kg_m3
    )


def lifted_share(volume_m3: float, density_kg_m3: float, total_mass_kg: float) -> float:
    """Share of the total weight carried by a fully submerged board's buoyancy [0-1+].

    ``rho * V / m_total`` with ``m_total`` = rider + gear + board (see the module notes:
    the rider is neutrally buoyant). A value above 1 means the submerged board alone
    would float the whole load.

    Examples
    --------
    >>> round(lifted_share(0.030, 999.1026, 83.0), 4)
    0.3611
    """
    return flotation_mass_kg(volume_m3, density_kg_m3) / _positive("total_mass_kg", total_mass_kg)


def litres_per_kg(volume_l: float, mass_kg: float) -> float:
    """Board volume per kilogram of rider mass [L/kg], the trade's sizing ratio.

    Common practice, no published source: riders size boards by this ratio.
    """
    return _non_negative("volume_l", volume_l) / _positive("mass_kg", mass_kg)


def planform_loading_n_m2(total_mass_kg: float, planform_area_m2: float, g_mps2: float = G_N) -> float:
    """Total weight per unit planform area [N/m^2]: ``m_total * g / A``."""
    return _non_negative("total_mass_kg", total_mass_kg) * g_mps2 / _positive(
        "planform_area_m2", planform_area_m2
    )
