"""Load figures for a rider on a board in given water.

:func:`load_figures` combines a :class:`~sessions.boards.Board`, a
:class:`~sessions.riders.Rider` and the water into :class:`LoadFigures`: static
buoyancy, how the load is shared, planform loading, the displacement-mode speed limit,
a predicted planing-onset speed band (Savitsky 1964) and the smallest breaking wave
that reaches that speed. Figures that need something the board lacks (mass, dimensions
or outline) are None, with the reason in :attr:`LoadFigures.unavailable`.

Every predicted figure is an estimate for comparing boards; :data:`CAUTION` is shown
wherever they are.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from sessions.boards import Board
from sessions.errors import BoardSpecError
from sessions.physics import buoyancy, planing, regimes, waves
from sessions.physics.water import Water
from sessions.riders import Rider
from sessions.units import G_N, L_M3

#: Shown wherever predictions are shown.
CAUTION = (
    "Estimates for comparing boards, not safety advice. Surf within your ability; "
    "follow local rules and lifeguards."
)

#: Share of the board's length that can be wetted when planing: rocker lifts the nose
#: clear, so about the aft 70 % carries the rider (common practice, no published source).
DEFAULT_WETTED_LENGTH_FRACTION = 0.7


@dataclass(frozen=True)
class LoadSettings:
    """Model settings of the load figures (all serialisable; defaults sourced in docs)."""

    trim_range_deg: tuple[float, float] = planing.DEFAULT_TRIM_RANGE_DEG
    deadrise_deg: float = planing.DEFAULT_DEADRISE_DEG
    dynamic_share_min: float = planing.DEFAULT_DYNAMIC_SHARE
    wetted_length_fraction: float = DEFAULT_WETTED_LENGTH_FRACTION
    breaker_index: str = "mccowan"
    celerity_model: str = "shallow"

    def to_json(self) -> dict:
        return {
            "trim_range_deg": list(self.trim_range_deg),
            "deadrise_deg": self.deadrise_deg,
            "dynamic_share_min": self.dynamic_share_min,
            "wetted_length_fraction": self.wetted_length_fraction,
            "breaker_index": self.breaker_index,
            "celerity_model": self.celerity_model,
        }


@dataclass(frozen=True)
class LoadFigures:
    """Load figures (SI). None marks a figure that could not be computed; see ``unavailable``."""

    total_mass_kg: float | None
    water_density_kg_m3: float
    buoyancy_n: float | None
    buoyancy_kg: float | None
    lifted_share: float | None
    board_float_fraction: float | None
    litres_per_kg: float | None
    planform_area_m2: float | None
    planform_loading_n_m2: float | None
    planform_loading_kg_m2: float | None
    displacement_speed_limit_mps: float | None
    predicted_onset_mps: tuple[float, float] | None
    min_breaking_wave_m: float | None
    breaking_wave_band_m: tuple[float, float] | None = None
    onset_froude_vol: tuple[float, float] | None = None
    onset_points: tuple[planing.OnsetPoint, ...] = ()
    planing_beam_m: float | None = None
    available_wetted_length_m: float | None = None
    volume_l: float | None = None
    volume_is_estimate: bool = False
    outline_source: str | None = None
    water: Water | None = None
    settings: LoadSettings = field(default_factory=LoadSettings)
    unavailable: dict[str, str] = field(default_factory=dict)
    notes: tuple[str, ...] = ()

    def to_json(self) -> dict:
        """A JSON-ready dict: the contract keys (SI) plus details, reasons and the caution."""

        def num(value):
            return None if value is None or (isinstance(value, float) and math.isnan(value)) else value

        def pair(value):
            return None if value is None else [num(value[0]), num(value[1])]

        return {
            "total_mass_kg": num(self.total_mass_kg),
            "water_density_kg_m3": self.water_density_kg_m3,
            "buoyancy_n": num(self.buoyancy_n),
            "buoyancy_kg": num(self.buoyancy_kg),
            "lifted_share": num(self.lifted_share),
            "board_float_fraction": num(self.board_float_fraction),
            "litres_per_kg": num(self.litres_per_kg),
            "planform_area_m2": num(self.planform_area_m2),
            "planform_loading_n_m2": num(self.planform_loading_n_m2),
            "planform_loading_kg_m2": num(self.planform_loading_kg_m2),
            "displacement_speed_limit_mps": num(self.displacement_speed_limit_mps),
            "predicted_onset_mps": pair(self.predicted_onset_mps),
            "min_breaking_wave_m": num(self.min_breaking_wave_m),
            "breaking_wave_band_m": pair(self.breaking_wave_band_m),
            "onset_froude_vol": pair(self.onset_froude_vol),
            "onset_points": [
                {
                    "trim_deg": p.trim_deg,
                    "speed_mps": num(p.speed_mps),
                    "speed_coefficient": num(p.speed_coefficient),
                    "wetted_length_ratio": num(p.wetted_length_ratio),
                    "wetted_length_m": num(p.wetted_length_m),
                    "dynamic_share": num(p.dynamic_share),
                    "limited_by": p.limited_by,
                }
                for p in self.onset_points
            ],
            "planing_beam_m": num(self.planing_beam_m),
            "available_wetted_length_m": num(self.available_wetted_length_m),
            "volume_l": num(self.volume_l),
            "volume_is_estimate": self.volume_is_estimate,
            "outline_source": self.outline_source,
            "water": None
            if self.water is None
            else {
                "preset": self.water.preset,
                "temperature_c": self.water.temperature_c,
                "salinity_g_kg": self.water.salinity_g_kg,
            },
            "settings": self.settings.to_json(),
            "unavailable": dict(self.unavailable),
            "notes": list(self.notes),
            "caution": CAUTION,
        }


def load_figures(
    board: Board,
    rider: Rider,
    water: Water | str = "sea",
    *,
    settings: LoadSettings | None = None,
) -> LoadFigures:
    """Load figures for ``rider`` on ``board`` in ``water``.

    Parameters
    ----------
    board : Board
        Needs a volume (stated or estimated); mass, dimensions and outline are used when
        present.
    rider : Rider
    water : Water or {"sea", "fresh"}
        A :class:`~sessions.physics.water.Water` or a preset name (15 degC).
    settings : LoadSettings, optional
        Trim range, deadrise, onset criterion, wetted-length share, breaker index.

    Returns
    -------
    LoadFigures

    Raises
    ------
    BoardSpecError
        The board has no volume.

    Notes
    -----
    * buoyancy: ``F_B = rho g V`` (Archimedes); ``buoyancy_kg = rho V``;
    * ``lifted_share = rho V / (m_rider + m_gear + m_board)``: the share of the total
      weight the fully submerged board carries, the rider being neutrally buoyant;
    * ``board_float_fraction = m_board / (rho V)``; ``litres_per_kg = V [L] / m_body``;
    * ``planform_loading = (m_rider + m_gear + m_board) g / A``;
    * displacement speed limit: the "hull speed" rule, ``Fn_L = 0.399`` on the board's
      length (an upper estimate: rocker shortens the waterline);
    * onset band: :func:`sessions.physics.planing.predicted_onset_band_mps` with the
      planing beam = mean width over the aft ``wetted_length_fraction`` of the outline;
    * smallest breaking wave: celerity ``sqrt(g d_b)`` equal to the low end of the onset
      band, ``H_b = 0.78 d_b`` (McCowan 1894); ``breaking_wave_band_m`` for both ends.
    """
    settings = settings or LoadSettings()
    water_obj = water if isinstance(water, Water) else Water.from_inputs(water)
    rho = water_obj.density_kg_m3
    unavailable: dict[str, str] = {}
    notes: list[str] = []

    if board.volume_l is None:
        raise BoardSpecError(f"board {board.name!r} has no volume; give its volume or dimensions")
    volume_m3 = board.volume_l * L_M3
    if board.volume_is_estimate:
        notes.append("board volume estimated from its dimensions")

    buoyancy_n = buoyancy.buoyant_force_n(volume_m3, rho)
    buoyancy_kg = buoyancy.flotation_mass_kg(volume_m3, rho)
    litres_per_kg = buoyancy.litres_per_kg(board.volume_l, rider.body_mass_kg)

    no_mass = "needs the board's mass"
    if board.mass_kg is None:
        total_mass = lifted = float_fraction = None
        for key in ("total_mass_kg", "lifted_share", "board_float_fraction"):
            unavailable[key] = no_mass
    else:
        total_mass = rider.total_mass_kg + board.mass_kg
        lifted = buoyancy.lifted_share(volume_m3, rho, total_mass)
        float_fraction = buoyancy.submerged_fraction(board.mass_kg, volume_m3, rho)
        if float_fraction > 1.0:
            notes.append("the board alone is heavier than the water it displaces: it sinks")

    outline = board.outline
    area = outline.planform_area_m2 if outline is not None else None
    no_shape = "needs the board's dimensions or outline"
    if area is None:
        unavailable["planform_area_m2"] = no_shape
    elif outline.source == "default":
        notes.append("planform area from a default outline for the length and width (an estimate)")

    loading_n = loading_kg = None
    if area is not None and total_mass is not None:
        loading_n = buoyancy.planform_loading_n_m2(total_mass, area)
        loading_kg = loading_n / G_N
    else:
        reason = no_shape if area is None else no_mass
        unavailable["planform_loading_n_m2"] = unavailable["planform_loading_kg_m2"] = reason

    length = board.length_m if board.length_m is not None else (outline.length_m if outline else None)
    if length is None:
        speed_limit = None
        unavailable["displacement_speed_limit_mps"] = no_shape
    else:
        speed_limit = regimes.hull_speed_mps(length)

    onset = wave = wave_band = froude_band = beam = wetted = None
    points: tuple[planing.OnsetPoint, ...] = ()
    if outline is None or total_mass is None:
        reason = no_shape if outline is None else no_mass
        for key in ("predicted_onset_mps", "min_breaking_wave_m", "breaking_wave_band_m", "onset_froude_vol"):
            unavailable[key] = reason
    else:
        frac = settings.wetted_length_fraction
        if not 0.2 <= frac <= 1.0:
            raise ValueError(f"wetted_length_fraction must lie in 0.2-1.0, got {frac!r}")
        wetted = frac * outline.length_m
        beam = outline.mean_width_m(outline.length_m - wetted, outline.length_m)
        load_n = total_mass * G_N
        t_lo, t_hi = settings.trim_range_deg
        points = tuple(
            planing.onset_point(load_n, beam, wetted, t, rho, settings.deadrise_deg,
                                dynamic_share_min=settings.dynamic_share_min)
            for t in (t_hi, t_lo)
        )
        low, high = points[0].speed_mps, points[1].speed_mps
        if math.isnan(low):
            for key in ("predicted_onset_mps", "min_breaking_wave_m", "breaking_wave_band_m", "onset_froude_vol"):
                unavailable[key] = "no planing onset inside the planing model's validity range"
        else:
            onset = (low, high)
            displaced = buoyancy.displaced_volume_m3(total_mass, rho)
            froude_band = tuple(regimes.froude_volume(v, displaced) if not math.isnan(v) else math.nan for v in onset)
            wave_band = tuple(
                waves.min_breaking_wave_height_m(v, settings.breaker_index, settings.celerity_model)
                if not math.isnan(v) else math.nan
                for v in onset
            )
            wave = wave_band[0]

    return LoadFigures(
        total_mass_kg=total_mass,
        water_density_kg_m3=rho,
        buoyancy_n=buoyancy_n,
        buoyancy_kg=buoyancy_kg,
        lifted_share=lifted,
        board_float_fraction=float_fraction,
        litres_per_kg=litres_per_kg,
        planform_area_m2=area,
        planform_loading_n_m2=loading_n,
        planform_loading_kg_m2=loading_kg,
        displacement_speed_limit_mps=speed_limit,
        predicted_onset_mps=onset,
        min_breaking_wave_m=wave,
        breaking_wave_band_m=wave_band,
        onset_froude_vol=froude_band,
        onset_points=points,
        planing_beam_m=beam,
        available_wetted_length_m=wetted,
        volume_l=board.volume_l,
        volume_is_estimate=board.volume_is_estimate,
        outline_source=None if outline is None else outline.source,
        water=water_obj,
        settings=settings,
        unavailable=unavailable,
        notes=tuple(notes),
    )
