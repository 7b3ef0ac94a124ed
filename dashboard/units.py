"""Display units of the dashboard: SI values from :mod:`sessions` shown in the user's units.

Only conversion and formatting happen here; the factors come from :mod:`sessions.units`
(exact by definition). Two systems are offered:

* ``metric``: speed in m/s or km/h, mass in kg, wave height and distance in m, board
  sizes in cm, planform area in m², planform loading in N/m²;
* ``trade``: the surf trade's mixed units - speed in knots, mph or km/h, mass in lb,
  wave height in ft, board sizes in feet and inches (sixteenths), area in ft², loading
  in lb/ft². Volume stays in litres in both (the trade measures volume in litres).

Missing values (None or NaN) are shown as an en dash.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from sessions.units import FT_M, G_N, KMH_MPS, KN_MPS, LB_KG, MPH_MPS

SYSTEMS = ("metric", "trade")
SYSTEM_LABELS = {"metric": "Metric", "trade": "Feet, inches and pounds"}
#: Speed units offered in each system (first = default).
SPEED_UNITS = {"metric": ("m/s", "km/h"), "trade": ("knots", "mph", "km/h")}
_SPEED_FACTOR = {"m/s": 1.0, "km/h": KMH_MPS, "knots": KN_MPS, "mph": MPH_MPS}  # m/s per unit
_SPEED_SYMBOL = {"m/s": "m/s", "km/h": "km/h", "knots": "kn", "mph": "mph"}
MISSING = "–"


@dataclass(frozen=True)
class DisplayUnits:
    """The user's choice of units (see the module docstring)."""

    system: str = "metric"
    speed_unit: str = "m/s"

    def __post_init__(self) -> None:
        if self.system not in SYSTEMS:
            raise ValueError(f"unknown unit system {self.system!r}; valid names: {', '.join(SYSTEMS)}")
        if self.speed_unit not in _SPEED_FACTOR:
            raise ValueError(f"unknown speed unit {self.speed_unit!r}; valid names: {', '.join(_SPEED_FACTOR)}")

    @property
    def trade(self) -> bool:
        return self.system == "trade"

    # --- unit symbols ----------------------------------------------------------------
    @property
    def speed_symbol(self) -> str:
        return _SPEED_SYMBOL[self.speed_unit]

    @property
    def mass_symbol(self) -> str:
        return "lb" if self.trade else "kg"

    @property
    def height_symbol(self) -> str:
        return "ft" if self.trade else "m"

    @property
    def area_symbol(self) -> str:
        return "ft²" if self.trade else "m²"

    @property
    def loading_symbol(self) -> str:
        return "lb/ft²" if self.trade else "N/m²"

    # --- conversions (SI in, display unit out) -----------------------------------------
    def speed_value(self, speed_mps):
        return _scale(speed_mps, 1.0 / _SPEED_FACTOR[self.speed_unit])

    def mass_value(self, mass_kg):
        return _scale(mass_kg, 1.0 / LB_KG if self.trade else 1.0)

    def height_value(self, height_m):
        return _scale(height_m, 1.0 / FT_M if self.trade else 1.0)

    def height_to_si(self, value):
        """A wave height typed in display units back to metres."""
        return _scale(value, FT_M if self.trade else 1.0)

    def area_value(self, area_m2):
        return _scale(area_m2, 1.0 / FT_M**2 if self.trade else 1.0)

    def loading_value(self, loading_n_m2):
        """Planform loading: N/m², or pounds-force per square foot in the trade system."""
        return _scale(loading_n_m2, FT_M**2 / (LB_KG * G_N) if self.trade else 1.0)

    # --- text --------------------------------------------------------------------------
    def speed(self, speed_mps, digits: int = 1) -> str:
        return _text(self.speed_value(speed_mps), digits, self.speed_symbol)

    def speed_range(self, lo_mps, hi_mps, digits: int = 1) -> str:
        lo, hi = self.speed_value(lo_mps), self.speed_value(hi_mps)
        if _missing(lo) or _missing(hi):
            return MISSING
        return f"{lo:.{digits}f}–{hi:.{digits}f} {self.speed_symbol}"

    def mass(self, mass_kg, digits: int = 1) -> str:
        return _text(self.mass_value(mass_kg), digits, self.mass_symbol)

    def height(self, height_m, digits: int = 1) -> str:
        return _text(self.height_value(height_m), digits, self.height_symbol)

    def area(self, area_m2, digits: int | None = None) -> str:
        return _text(self.area_value(area_m2), (2 if self.trade else 3) if digits is None else digits,
                     self.area_symbol)

    def loading(self, loading_n_m2) -> str:
        value = self.loading_value(loading_n_m2)
        return _text(value, 2 if self.trade else 0, self.loading_symbol)

    def board_size(self, length_m, width_m, thickness_m) -> str:
        """Board dimensions: trade notation (sixteenths of an inch) or centimetres."""
        from sessions.boards import Dimensions, format_dimensions

        if any(_missing(v) for v in (length_m, width_m, thickness_m)):
            return MISSING
        dims = Dimensions(float(length_m), float(width_m), float(thickness_m))
        return format_dimensions(dims, "trade" if self.trade else "metric")

    def board_length(self, length_m) -> str:
        if _missing(length_m):
            return MISSING
        if self.trade:
            inches = round(float(length_m) / FT_M * 12)
            return f"{inches // 12}'{inches % 12}\""
        return f"{float(length_m) * 100:.0f} cm"


# --- pure helpers ----------------------------------------------------------------------
def _missing(value) -> bool:
    if value is None:
        return True
    try:
        return math.isnan(float(value))
    except (TypeError, ValueError):
        return True


def _scale(value, factor: float):
    """``value * factor`` for numbers and numpy/pandas arrays; None stays None."""
    if value is None:
        return None
    return value * factor


def _text(value, digits: int, symbol: str) -> str:
    if _missing(value):
        return MISSING
    return f"{float(value):.{digits}f} {symbol}"


def duration(seconds) -> str:
    """``1:02:05`` for a session, ``42 s`` below a minute."""
    if _missing(seconds):
        return MISSING
    total = int(round(float(seconds)))
    if total < 60:
        return f"{total} s"
    h, rest = divmod(total, 3600)
    m, s = divmod(rest, 60)
    return f"{h}:{m:02d}:{s:02d}"


def number(value, digits: int = 1) -> str:
    if _missing(value):
        return MISSING
    return f"{float(value):.{digits}f}"


def share(value) -> str:
    """A fraction 0..1 as a whole percentage."""
    if _missing(value):
        return MISSING
    return f"{float(value) * 100:.0f} %"
