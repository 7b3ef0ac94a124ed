"""The rider: body mass, gear mass and ability level, and a parser for masses.

Masses are kilograms inside; the parser accepts kilograms (``80``, ``80kg``,
``80 kg``) and pounds (``176lb``, ``176 lbs``; 1 lb = 0.45359237 kg exactly).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from sessions.errors import FloatliftError, RiderSpecError
from sessions.units import LB_KG

#: Ability levels, least to most experienced (plain English words of the trade).
ABILITY_LEVELS = ("beginner", "improver", "intermediate", "advanced", "expert")

#: Accepted body mass [kg]; outside it is almost surely a typing error.
BODY_MASS_RANGE_KG = (15.0, 250.0)
#: Accepted gear mass [kg] (wetsuit, leash, vest, boots; a wet thick suit weighs a few kg).
GEAR_MASS_RANGE_KG = (0.0, 25.0)

_MASS_RE = re.compile(
    r"^\s*(?P<num>[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*"
    r"(?P<unit>kg|kgs|kilo|kilos|kilograms?|lb|lbs|pounds?|#)?\s*$",
    re.IGNORECASE,
)


def parse_mass_kg(
    text: str | float | int,
    *,
    what: str = "mass",
    error_cls: type[FloatliftError] = RiderSpecError,
) -> float:
    """Mass in kilograms from ``80``, ``80kg``, ``80 kg``, ``176lb`` or ``176 lbs``.

    Parameters
    ----------
    text : str or number
        A bare number is kilograms.
    what : str
        Name used in the error message (e.g. "rider mass").
    error_cls : type
        Error class raised for bad input (default :class:`RiderSpecError`).

    Raises
    ------
    RiderSpecError (or ``error_cls``)
        Not a mass, not finite, or not positive.

    Examples
    --------
    >>> parse_mass_kg("80")
    80.0
    >>> round(parse_mass_kg("176lb"), 3)
    79.832
    """
    if isinstance(text, bool):
        raise error_cls(f"{what} {text!r} is not a mass")
    if isinstance(text, (int, float)):
        value, unit = float(text), "kg"
    else:
        match = _MASS_RE.match(str(text))
        if match is None:
            raise error_cls(f"{what} {text!r} is not a mass; write e.g. 80, 80kg or 176lb")
        value = float(match["num"])
        unit = (match["unit"] or "kg").lower()
    if not math.isfinite(value) or value <= 0.0:
        raise error_cls(f"{what} {text!r} must be a positive number")
    return value * LB_KG if unit.startswith(("lb", "pound", "#")) else value


def format_mass(mass_kg: float, unit: str = "kg") -> str:
    """``"80 kg"`` or ``"176.4 lb"``; one decimal, trailing zeros dropped."""
    if unit == "kg":
        return f"{round(mass_kg, 1):g} kg"
    if unit == "lb":
        return f"{round(mass_kg / LB_KG, 1):g} lb"
    raise ValueError(f"unknown mass unit {unit!r}; valid names: kg, lb")


@dataclass(frozen=True)
class Rider:
    """A rider as the load physics sees them.

    Attributes
    ----------
    name : str
    body_mass_kg : float
        Body mass [kg].
    gear_mass_kg : float
        Wetsuit, leash and other worn gear [kg]; default 0 (give it when known: a wet
        winter suit adds a few kilograms).
    ability : str
        One of :data:`ABILITY_LEVELS`.
    """

    name: str
    body_mass_kg: float
    gear_mass_kg: float = 0.0
    ability: str = "intermediate"

    def __post_init__(self) -> None:
        _check_range("body mass", self.body_mass_kg, BODY_MASS_RANGE_KG)
        _check_range("gear mass", self.gear_mass_kg, GEAR_MASS_RANGE_KG)
        if self.ability not in ABILITY_LEVELS:
            raise RiderSpecError(
                f"unknown ability level {self.ability!r}; valid names: {', '.join(ABILITY_LEVELS)}"
            )

    @property
    def total_mass_kg(self) -> float:
        """Body plus gear [kg]."""
        return self.body_mass_kg + self.gear_mass_kg

    @classmethod
    def from_spec(
        cls,
        name: str,
        body_mass: str | float,
        gear_mass: str | float | None = None,
        ability: str | None = None,
    ) -> "Rider":
        """Rider from user text: masses as ``80``, ``80kg`` or ``176lb``; ability by name."""
        body = parse_mass_kg(body_mass, what="rider mass")
        gear = 0.0 if gear_mass in (None, "", 0, 0.0, "0") else parse_mass_kg(gear_mass, what="gear mass")
        level = "intermediate" if ability is None else str(ability).strip().lower()
        return cls(name=name, body_mass_kg=body, gear_mass_kg=gear, ability=level)


def _check_range(what: str, value: float, bounds: tuple[float, float]) -> None:
    low, high = bounds
    try:
        value = float(value)
    except (TypeError, ValueError) as exc:
        raise RiderSpecError(f"{what} {value!r} is not a number") from exc
    if not math.isfinite(value) or not low <= value <= high:
        raise RiderSpecError(f"{what} {value:g} kg is outside {low:g} to {high:g} kg")
