"""Density of the water a board floats in, from temperature and salinity (TEOS-10).

The density comes from the TEOS-10 Gibbs function of seawater through the ``gsw``
package (``gsw.rho_t_exact``), at the sea surface (sea pressure 0 dbar) and with the
in-situ temperature a thermometer reads. At zero salinity TEOS-10 reduces to pure
liquid water and agrees with IAPWS-95 to about 1e-4 kg/m^3.

References
----------
IOC, SCOR and IAPSO, 2010: *The international thermodynamic equation of seawater - 2010:
Calculation and use of thermodynamic properties*. Intergovernmental Oceanographic
Commission, Manuals and Guides No. 56, UNESCO.
McDougall, T. J. and P. M. Barker, 2011: *Getting started with TEOS-10 and the Gibbs
Seawater (GSW) Oceanographic Toolbox*. SCOR/IAPSO WG127.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from sessions.errors import ConditionsError

#: Absolute Salinity of standard seawater of Practical Salinity 35 [g/kg]
#: (TEOS-10 manual, 2010, section 2.4: S_R = 35.16504 g/kg for S_P = 35).
STANDARD_SEAWATER_SALINITY_G_KG = 35.16504

#: Default water temperature [deg C] when none is given: 15 deg C, the reference
#: temperature of the ITTC fresh-water and seawater property tables (ITTC
#: Recommended Procedure 7.5-02-01-03, 2011; from memory).
DEFAULT_TEMPERATURE_C = 15.0

#: Named water presets: Absolute Salinity [g/kg].
PRESETS: dict[str, float] = {
    "sea": STANDARD_SEAWATER_SALINITY_G_KG,
    "fresh": 0.0,
}

#: Range accepted for user input. TEOS-10's Gibbs function is valid well beyond it;
#: these limits are about surfable water, not about the equation.
TEMPERATURE_RANGE_C = (-2.5, 40.0)
SALINITY_RANGE_G_KG = (0.0, 42.0)


@dataclass(frozen=True)
class Water:
    """Water a board floats in (thin record; the density is computed on demand)."""

    salinity_g_kg: float
    temperature_c: float = DEFAULT_TEMPERATURE_C
    preset: str | None = None

    @property
    def density_kg_m3(self) -> float:
        return density_kg_m3(temperature_c=self.temperature_c, salinity_g_kg=self.salinity_g_kg)

    @property
    def label(self) -> str:
        name = self.preset or "custom"
        return f"{name} water, {self.temperature_c:g} degC, {self.salinity_g_kg:g} g/kg"

    @classmethod
    def from_inputs(
        cls,
        preset: str | None = None,
        *,
        temperature_c: float | None = None,
        salinity_g_kg: float | None = None,
    ) -> "Water":
        """Water from a preset name and/or explicit temperature and salinity.

        A given temperature or salinity overrides the preset's; with neither preset nor
        salinity the water is ``"sea"``.
        """
        if preset is not None:
            key = str(preset).strip().lower()
            if key not in PRESETS:
                raise ConditionsError(
                    f"unknown water preset {preset!r}; valid names: {', '.join(sorted(PRESETS))}"
                )
            preset = key
        elif salinity_g_kg is None:
            preset = "sea"
        salinity = PRESETS[preset] if salinity_g_kg is None else float(salinity_g_kg)
        temperature = DEFAULT_TEMPERATURE_C if temperature_c is None else float(temperature_c)
        _check_range("water temperature", temperature, TEMPERATURE_RANGE_C, "degC")
        _check_range("salinity", salinity, SALINITY_RANGE_G_KG, "g/kg")
        if salinity_g_kg is not None and preset is not None and salinity != PRESETS[preset]:
            preset = None  # explicit salinity: no longer the preset's water
        water = cls(salinity_g_kg=salinity, temperature_c=temperature, preset=preset)
        _check_not_frozen(water)
        return water


def density_kg_m3(
    preset: str | None = None,
    *,
    temperature_c: float | None = None,
    salinity_g_kg: float | None = None,
) -> float:
    """Density of water at the surface [kg/m^3] from TEOS-10.

    Parameters
    ----------
    preset : {"sea", "fresh"}, optional
        ``"sea"``: standard seawater, Absolute Salinity 35.16504 g/kg; ``"fresh"``: 0 g/kg.
        Without a preset and without a salinity, ``"sea"`` is used.
    temperature_c : float, optional
        In-situ temperature [deg C]; default 15 deg C (:data:`DEFAULT_TEMPERATURE_C`).
    salinity_g_kg : float, optional
        Absolute Salinity [g/kg]; overrides the preset's.

    Returns
    -------
    float
        Density [kg/m^3] at sea pressure 0 dbar.

    Raises
    ------
    ConditionsError
        Unknown preset, or a temperature or salinity out of range, or water below its
        freezing point.

    Notes
    -----
    ``rho = gsw.rho_t_exact(SA, t, p=0)``: the density from the TEOS-10 Gibbs function
    of seawater (IOC et al. 2010, eq. 2.8.2) evaluated with in-situ temperature.

    References
    ----------
    IOC, SCOR and IAPSO, 2010, TEOS-10 manual (UNESCO Manuals and Guides 56).

    Examples
    --------
    >>> round(density_kg_m3("fresh", temperature_c=20.0), 2)
    998.21
    """
    water = Water.from_inputs(preset, temperature_c=temperature_c, salinity_g_kg=salinity_g_kg)
    return _teos10_density(water.salinity_g_kg, water.temperature_c)


def _teos10_density(salinity_g_kg: float, temperature_c: float) -> float:
    import gsw  # imported here: gsw loads a compiled library

    return float(gsw.rho_t_exact(salinity_g_kg, temperature_c, 0.0))


def _check_range(what: str, value: float, bounds: tuple[float, float], unit: str) -> None:
    low, high = bounds
    if not math.isfinite(value) or not low <= value <= high:
        raise ConditionsError(f"{what} {value:g} {unit} is outside {low:g} to {high:g} {unit}")


def _check_not_frozen(water: Water) -> None:
    import gsw

    t_freeze = float(gsw.t_freezing(water.salinity_g_kg, 0.0, 0.0))
    if water.temperature_c < t_freeze:
        raise ConditionsError(
            f"water at {water.temperature_c:g} degC and {water.salinity_g_kg:g} g/kg would be ice "
            f"(freezing point {t_freeze:.2f} degC)"
        )
