"""Savitsky's (1964) planing lift equation and a planing-onset speed band built on it.

Savitsky's empirical lift equation for a prismatic planing surface (his eq. 15, zero
deadrise, trim ``tau`` in **degrees**, ``lam`` = mean wetted length / beam,
``Cv = V / sqrt(g b)``)::

    C_L0 = tau**1.1 * (0.0120 * lam**0.5 + 0.0055 * lam**2.5 / Cv**2)

and its deadrise correction (eq. 16, deadrise ``beta`` in degrees)::

    C_Lbeta = C_L0 - 0.0065 * beta * C_L0**0.60

with lift ``L = 0.5 * rho * V**2 * b**2 * C_Lbeta``. The first term in the bracket is the
dynamic lift, the second the hydrostatic (buoyant) lift. Valid for 0.60 <= Cv <= 13,
2 <= tau <= 15 deg, lam <= 4 (eq. 15) and beta <= 30 deg (eq. 16).

Onset criterion used by floatlift
---------------------------------
For a trim angle ``tau``, the planing onset is the lowest speed at which, with lift equal
to the whole load (rider + gear + board weight),

1. the equilibrium mean wetted length ``lam * b`` fits the board's available wetted
   length and ``lam <= 4`` (Savitsky's limit);
2. the dynamic term carries at least half of the lift (``dynamic share >= 0.5``), which
   for eq. 15 is ``Cv >= 0.677 * lam`` (derived here from eq. 15, not a published
   criterion);
3. ``Cv >= 0.60`` (Savitsky's lower limit).

All three conditions only get easier as speed rises (``lam`` falls, ``Cv`` rises), so the
onset is a single root. The band over a trim range is ``[onset(tau_max), onset(tau_min)]``:
a board trimmed steeper lifts more per wetted length and planes sooner.

References
----------
Savitsky, D., 1964: Hydrodynamic design of planing hulls. *Marine Technology* 1(1),
71-95 (eqs. 15 and 16, validity ranges, the centre-of-pressure equation).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

from scipy.optimize import brentq

from sessions.errors import ConditionsError, ModelValidityWarning
from sessions.units import G_N

#: Savitsky (1964) validity limits of eq. 15 and eq. 16.
CV_RANGE = (0.60, 13.0)
TRIM_RANGE_DEG = (2.0, 15.0)
LAMBDA_MAX = 4.0
DEADRISE_MAX_DEG = 30.0

#: Default trim range for the onset band [deg]. No measured surfboard trim angle while
#: planing has been published (a gap noted in docs/physics.md). Planing hulls run
#: steepest through the pre-planing "hump", typically at about 5-12 deg, and flatten to
#: about 2-5 deg once fully planing (Savitsky 1964 and Faltinsen 2005, ch. 9, trim
#: curves; from memory). Onset lies in the hump, so floatlift takes 6-12 deg, inside
#: Savitsky's 2-15 deg range (the choice itself is ours: common practice, no published
#: source for surfboards).
DEFAULT_TRIM_RANGE_DEG = (6.0, 12.0)

#: Default deadrise [deg]: surfboard bottoms are nearly flat across the planing area
#: (common practice, no published source).
DEFAULT_DEADRISE_DEG = 0.0

#: Share of the lift the dynamic term must carry at onset (floatlift's criterion).
DEFAULT_DYNAMIC_SHARE = 0.5

_DYN = 0.0120  # dynamic coefficient of eq. 15
_HYD = 0.0055  # hydrostatic coefficient of eq. 15
_BETA = 0.0065  # deadrise coefficient of eq. 16


def check_validity(
    *,
    cv: float | None = None,
    trim_deg: float | None = None,
    lam: float | None = None,
    deadrise_deg: float | None = None,
    mode: str = "warn",
) -> list[str]:
    """Compare inputs with Savitsky's validity ranges; warn, raise or just report.

    Parameters
    ----------
    cv, trim_deg, lam, deadrise_deg : float, optional
        The values to check (those left out are not checked).
    mode : {"warn", "raise", "ignore"}
        ``"warn"`` issues one :class:`~sessions.errors.ModelValidityWarning` per problem,
        ``"raise"`` raises :class:`~sessions.errors.ConditionsError`, ``"ignore"`` only
        returns the list.

    Returns
    -------
    list of str
        One sentence per value outside its range (empty when all are inside).
    """
    if mode not in ("warn", "raise", "ignore"):
        raise ValueError(f"unknown validity mode {mode!r}; valid names: warn, raise, ignore")
    problems: list[str] = []
    if cv is not None and not CV_RANGE[0] <= cv <= CV_RANGE[1]:
        problems.append(f"speed coefficient Cv={cv:.3g} is outside Savitsky's {CV_RANGE[0]}-{CV_RANGE[1]}")
    if trim_deg is not None and not TRIM_RANGE_DEG[0] <= trim_deg <= TRIM_RANGE_DEG[1]:
        problems.append(
            f"trim {trim_deg:.3g} deg is outside Savitsky's {TRIM_RANGE_DEG[0]:g}-{TRIM_RANGE_DEG[1]:g} deg"
        )
    if lam is not None and not 0.0 < lam <= LAMBDA_MAX:
        problems.append(f"wetted length/beam {lam:.3g} is outside Savitsky's 0-{LAMBDA_MAX:g}")
    if deadrise_deg is not None and not 0.0 <= deadrise_deg <= DEADRISE_MAX_DEG:
        problems.append(f"deadrise {deadrise_deg:.3g} deg is outside Savitsky's 0-{DEADRISE_MAX_DEG:g} deg")
    if problems and mode == "raise":
        raise ConditionsError("; ".join(problems))
    if mode == "warn":
        for text in problems:
            warnings.warn(text, ModelValidityWarning, stacklevel=3)
    return problems


def lift_coefficient_flat(trim_deg: float, lam: float, cv: float, *, validity: str = "warn") -> float:
    """Lift coefficient of a flat (zero-deadrise) planing surface, Savitsky eq. 15.

    Parameters
    ----------
    trim_deg : float
        Trim angle tau [deg].
    lam : float
        Mean wetted length / beam [-].
    cv : float
        Speed coefficient ``V / sqrt(g b)`` [-].
    validity : {"warn", "raise", "ignore"}
        What to do outside the validity ranges (see :func:`check_validity`).

    Notes
    -----
    ``C_L0 = tau^1.1 (0.0120 lam^0.5 + 0.0055 lam^2.5 / Cv^2)``.

    References
    ----------
    Savitsky 1964, eq. 15.

    Examples
    --------
    >>> round(lift_coefficient_flat(4.0, 2.0, 3.0), 6)
    0.09386
    """
    check_validity(cv=cv, trim_deg=trim_deg, lam=lam, mode=validity)
    return trim_deg**1.1 * (_DYN * lam**0.5 + _HYD * lam**2.5 / cv**2)


def lift_coefficient_deadrise(c_l0: float, deadrise_deg: float, *, validity: str = "warn") -> float:
    """Lift coefficient with deadrise, Savitsky eq. 16: ``C_L0 - 0.0065 beta C_L0^0.60``.

    Examples
    --------
    >>> round(lift_coefficient_deadrise(0.093860, 10.0), 6)
    0.078142
    """
    check_validity(deadrise_deg=deadrise_deg, mode=validity)
    return c_l0 - _BETA * deadrise_deg * c_l0**0.60


def center_of_pressure_fraction(cv: float, lam: float) -> float:
    """Centre of pressure as a fraction of the mean wetted length forward of the transom.

    ``C_P = 0.75 - 1 / (5.21 Cv^2 / lam^2 + 2.39)`` (Savitsky 1964, eq. 17 as usually
    numbered; from memory).
    """
    return 0.75 - 1.0 / (5.21 * cv**2 / lam**2 + 2.39)


def dynamic_share(lam: float, cv: float) -> float:
    """Share of eq. 15's lift carried by its dynamic term (0-1).

    ``0.0120 lam^0.5 / (0.0120 lam^0.5 + 0.0055 lam^2.5 / Cv^2)``; the trim factor
    cancels.
    """
    dyn = _DYN * lam**0.5
    return dyn / (dyn + _HYD * lam**2.5 / cv**2)


def lift_n(
    speed_mps: float,
    beam_m: float,
    trim_deg: float,
    lam: float,
    density_kg_m3: float,
    deadrise_deg: float = 0.0,
    *,
    g_mps2: float = G_N,
    validity: str = "warn",
) -> float:
    """Lift [N] of a planing surface: ``0.5 rho V^2 b^2 C_Lbeta`` (Savitsky eqs. 15-16)."""
    cv = speed_mps / math.sqrt(g_mps2 * beam_m)
    c_l0 = lift_coefficient_flat(trim_deg, lam, cv, validity=validity)
    c_lb = lift_coefficient_deadrise(c_l0, deadrise_deg, validity=validity) if deadrise_deg else c_l0
    return 0.5 * density_kg_m3 * speed_mps**2 * beam_m**2 * c_lb


def _c_l0_from_c_lbeta(c_lbeta: float, deadrise_deg: float) -> float:
    """Invert eq. 16 for C_L0 on its increasing branch."""
    if deadrise_deg == 0.0:
        return c_lbeta
    k = _BETA * deadrise_deg
    x_min = (0.6 * k) ** 2.5  # where d/dx (x - k x^0.6) = 0
    f = lambda x: x - k * x**0.6 - c_lbeta  # noqa: E731
    hi = max(2.0 * c_lbeta, 1e-3)
    while f(hi) < 0.0:
        hi *= 2.0
    if f(x_min) >= 0.0:
        return x_min
    return brentq(f, x_min, hi, xtol=1e-14, rtol=1e-12)


def wetted_length_ratio(
    load_n: float,
    speed_mps: float,
    beam_m: float,
    trim_deg: float,
    density_kg_m3: float,
    deadrise_deg: float = 0.0,
    *,
    g_mps2: float = G_N,
) -> float:
    """Equilibrium mean wetted length / beam ``lam`` at which lift equals ``load_n``.

    Solves ``load = 0.5 rho V^2 b^2 C_Lbeta(tau, lam, Cv)`` for ``lam`` (eqs. 15-16);
    the result is returned even outside the validity ranges (the caller checks).
    """
    if speed_mps <= 0.0:
        return math.inf
    c_lbeta = 2.0 * load_n / (density_kg_m3 * speed_mps**2 * beam_m**2)
    c_l0 = _c_l0_from_c_lbeta(c_lbeta, deadrise_deg)
    cv = speed_mps / math.sqrt(g_mps2 * beam_m)
    tau = trim_deg**1.1
    f = lambda lam: tau * (_DYN * lam**0.5 + _HYD * lam**2.5 / cv**2) - c_l0  # noqa: E731
    hi = 1.0
    while f(hi) < 0.0:
        hi *= 2.0
        if hi > 1e9:
            return math.inf
    return brentq(f, 0.0, hi, xtol=1e-12, rtol=1e-12)


@dataclass(frozen=True)
class OnsetPoint:
    """Predicted planing onset for one trim angle."""

    trim_deg: float
    speed_mps: float  # NaN when no onset exists inside the validity ranges
    speed_coefficient: float  # Cv at onset
    wetted_length_ratio: float  # lam at onset
    wetted_length_m: float  # lam * b
    dynamic_share: float  # share of lift from the dynamic term at onset
    limited_by: str  # "wetted length", "dynamic lift" or "speed coefficient"


def onset_point(
    load_n: float,
    beam_m: float,
    available_wetted_length_m: float,
    trim_deg: float,
    density_kg_m3: float,
    deadrise_deg: float = DEFAULT_DEADRISE_DEG,
    *,
    dynamic_share_min: float = DEFAULT_DYNAMIC_SHARE,
    g_mps2: float = G_N,
) -> OnsetPoint:
    """Planing-onset speed for one trim angle (criterion in the module notes).

    Parameters
    ----------
    load_n : float
        Weight to be carried [N] (rider + gear + board).
    beam_m : float
        Planing beam [m].
    available_wetted_length_m : float
        Longest mean wetted length the board offers at this trim [m].
    trim_deg, deadrise_deg : float
        Trim and deadrise [deg]; must lie in Savitsky's ranges (ConditionsError otherwise).
    density_kg_m3 : float
        Water density [kg/m^3].
    dynamic_share_min : float
        Share of lift the dynamic term must carry (0-1), default 0.5.

    Returns
    -------
    OnsetPoint
        ``speed_mps`` is NaN (with a ModelValidityWarning) when no speed up to
        ``Cv = 13`` meets the criterion.
    """
    for name, value in (("load_n", load_n), ("beam_m", beam_m),
                        ("available_wetted_length_m", available_wetted_length_m),
                        ("density_kg_m3", density_kg_m3)):
        if not math.isfinite(value) or value <= 0.0:
            raise ValueError(f"{name} must be a positive finite number, got {value!r}")
    if not 0.0 < dynamic_share_min < 1.0:
        raise ValueError(f"dynamic_share_min must lie strictly between 0 and 1, got {dynamic_share_min!r}")
    check_validity(trim_deg=trim_deg, deadrise_deg=deadrise_deg, mode="raise")
    lam_max = min(LAMBDA_MAX, available_wetted_length_m / beam_m)
    k_dyn = math.sqrt(_HYD * dynamic_share_min / (_DYN * (1.0 - dynamic_share_min)))
    v_unit = math.sqrt(g_mps2 * beam_m)

    def margins(speed: float) -> tuple[float, float, float]:
        lam = wetted_length_ratio(load_n, speed, beam_m, trim_deg, density_kg_m3, deadrise_deg, g_mps2=g_mps2)
        cv = speed / v_unit
        return (lam_max - lam) / lam_max, (cv - k_dyn * lam) / max(cv, 1e-12), (cv - CV_RANGE[0]) / CV_RANGE[0]

    def g(speed: float) -> float:
        return min(margins(speed))

    v_hi = CV_RANGE[1] * v_unit
    if g(v_hi) < 0.0:
        warnings.warn(
            f"no planing onset below Cv={CV_RANGE[1]:g} ({v_hi:.1f} m/s) at trim {trim_deg:g} deg: "
            "the load is too large for the board in Savitsky's range",
            ModelValidityWarning,
            stacklevel=2,
        )
        nan = math.nan
        return OnsetPoint(trim_deg, nan, nan, nan, nan, nan, "none")
    v_lo = 0.5 * CV_RANGE[0] * v_unit
    speed = brentq(g, v_lo, v_hi, xtol=1e-10, rtol=1e-10)
    lam = wetted_length_ratio(load_n, speed, beam_m, trim_deg, density_kg_m3, deadrise_deg, g_mps2=g_mps2)
    cv = speed / v_unit
    names = ("wetted length", "dynamic lift", "speed coefficient")
    m = margins(speed)
    limited_by = names[min(range(3), key=lambda i: abs(m[i]))]
    return OnsetPoint(trim_deg, speed, cv, lam, lam * beam_m, dynamic_share(lam, cv), limited_by)


def predicted_onset_band_mps(
    load_n: float,
    beam_m: float,
    available_wetted_length_m: float,
    *,
    density_kg_m3: float,
    trim_range_deg: tuple[float, float] = DEFAULT_TRIM_RANGE_DEG,
    deadrise_deg: float = DEFAULT_DEADRISE_DEG,
    dynamic_share_min: float = DEFAULT_DYNAMIC_SHARE,
    g_mps2: float = G_N,
) -> tuple[float, float]:
    """Predicted planing-onset speed band [m/s] over a trim range, ``(low, high)``.

    ``low`` is the onset at the steepest trim, ``high`` at the flattest (see the module
    notes for the criterion). Both are NaN when no onset exists in Savitsky's ranges.

    Parameters
    ----------
    load_n : float
        Weight carried [N].
    beam_m : float
        Planing beam [m].
    available_wetted_length_m : float
        Longest mean wetted length the board offers [m].
    density_kg_m3 : float
        Water density [kg/m^3].
    trim_range_deg : (float, float)
        Trim range [deg]; default (6, 12), see :data:`DEFAULT_TRIM_RANGE_DEG`.
    deadrise_deg : float
        Deadrise [deg]; default 0.
    dynamic_share_min : float
        Share of lift from the dynamic term at onset; default 0.5.

    Examples
    --------
    >>> low, high = predicted_onset_band_mps(814.0, 0.47, 1.3, density_kg_m3=1025.0)
    >>> 3.0 < low < high < 7.0
    True
    """
    t_lo, t_hi = (float(t) for t in trim_range_deg)
    if not t_lo <= t_hi:
        raise ConditionsError(f"trim range must be given low to high, got {t_lo:g} to {t_hi:g} deg")
    points = [
        onset_point(load_n, beam_m, available_wetted_length_m, t, density_kg_m3, deadrise_deg,
                    dynamic_share_min=dynamic_share_min, g_mps2=g_mps2)
        for t in (t_hi, t_lo)
    ]
    return points[0].speed_mps, points[1].speed_mps
