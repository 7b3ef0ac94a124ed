"""Wave celerity in shallow water and the smallest breaking wave that reaches a speed.

A wave about to break in shallow water travels at ``c = sqrt(g d)`` (linear long-wave
theory) and breaks when its height reaches ``H_b = gamma * d_b`` (breaker index gamma).
Asking for the celerity to equal a board's planing-onset speed ``V`` gives the
breaking depth ``d_b = V^2 / g`` and height ``H_b = gamma V^2 / g``. A surfer riding
across the face, or pumping, goes faster than the wave itself, so this is an estimate for
comparing boards, not a limit.

References
----------
McCowan, J., 1894: On the highest wave of permanent type. *Philosophical Magazine*
(5) 38, 351-358 (solitary-wave breaking limit H/d = 0.78).
Miche, R., 1944: Mouvements ondulatoires de la mer en profondeur constante ou
decroissante. *Annales des Ponts et Chaussees* 114 (steepness limit
H/L = 0.142 tanh(kd); its shallow-water limit H/d = 0.142 * 2 pi = 0.892).
Dean, R. G. and Dalrymple, R. A., 1991: *Water Wave Mechanics for Engineers and
Scientists*, World Scientific (shallow-water celerity; solitary-wave celerity
sqrt(g (d + H))).
"""

from __future__ import annotations

import math

from sessions.units import G_N

#: Breaker indices gamma_b = H_b / d_b by name.
BREAKER_INDICES: dict[str, float] = {
    "mccowan": 0.78,  # McCowan 1894
    "miche": 0.142 * 2.0 * math.pi,  # Miche 1944, shallow-water limit
}

#: Celerity models by name: "shallow" c = sqrt(g d); "solitary" c = sqrt(g (d + H)).
CELERITY_MODELS = ("shallow", "solitary")


def breaker_index(name: str = "mccowan") -> float:
    """Breaker index gamma_b for a named criterion; ValueError lists valid names."""
    key = str(name).strip().lower()
    if key not in BREAKER_INDICES:
        raise ValueError(f"unknown breaker index {name!r}; valid names: {', '.join(sorted(BREAKER_INDICES))}")
    return BREAKER_INDICES[key]


def shallow_water_celerity_mps(depth_m: float, g_mps2: float = G_N) -> float:
    """Celerity of a long wave in water of depth ``depth_m`` [m/s]: ``c = sqrt(g d)``.

    Examples
    --------
    >>> round(shallow_water_celerity_mps(1.0 / 0.78), 4)
    3.5458
    """
    depth_m = float(depth_m)
    if not math.isfinite(depth_m) or depth_m < 0.0:
        raise ValueError(f"depth_m must be a non-negative finite number, got {depth_m!r}")
    return math.sqrt(g_mps2 * depth_m)


def breaking_depth_m(wave_height_m: float, index: str | float = "mccowan") -> float:
    """Depth at which a wave of height ``wave_height_m`` breaks: ``d_b = H_b / gamma_b``."""
    gamma = breaker_index(index) if isinstance(index, str) else float(index)
    return float(wave_height_m) / gamma


def breaking_wave_celerity_mps(
    wave_height_m: float, index: str | float = "mccowan", model: str = "shallow", g_mps2: float = G_N
) -> float:
    """Celerity [m/s] of a wave of height ``wave_height_m`` at its breaking point."""
    depth = breaking_depth_m(wave_height_m, index)
    if model == "shallow":
        return shallow_water_celerity_mps(depth, g_mps2)
    if model == "solitary":
        return shallow_water_celerity_mps(depth + float(wave_height_m), g_mps2)
    raise ValueError(f"unknown celerity model {model!r}; valid names: {', '.join(CELERITY_MODELS)}")


def min_breaking_wave_height_m(
    speed_mps: float, index: str | float = "mccowan", model: str = "shallow", g_mps2: float = G_N
) -> float:
    """Height [m] of the smallest breaking wave whose celerity reaches ``speed_mps``.

    Parameters
    ----------
    speed_mps : float
        Speed the wave must carry a board at [m/s].
    index : str or float
        Breaker index by name (``"mccowan"`` 0.78, ``"miche"`` 0.892) or as a number.
    model : {"shallow", "solitary"}
        ``"shallow"``: ``c = sqrt(g d)`` so ``H = gamma V^2 / g``; ``"solitary"``:
        ``c = sqrt(g (d + H))`` so ``H = gamma V^2 / (g (1 + gamma))``.

    Examples
    --------
    >>> round(min_breaking_wave_height_m(3.5458), 3)
    1.0
    """
    speed_mps = float(speed_mps)
    if not math.isfinite(speed_mps) or speed_mps < 0.0:
        raise ValueError(f"speed_mps must be a non-negative finite number, got {speed_mps!r}")
    gamma = breaker_index(index) if isinstance(index, str) else float(index)
    if model == "shallow":
        return gamma * speed_mps**2 / g_mps2
    if model == "solitary":
        return gamma * speed_mps**2 / (g_mps2 * (1.0 + gamma))
    raise ValueError(f"unknown celerity model {model!r}; valid names: {', '.join(CELERITY_MODELS)}")
