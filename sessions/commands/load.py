"""``floatlift load``: buoyancy, load sharing and planing-onset estimates for a rider on a board."""

from __future__ import annotations

import argparse
import json
import sys

_CAUTION_SHORT = (
    "Estimates only, for comparing boards; surf within your ability and follow local rules and lifeguards."
)


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "load",
        help="buoyancy, load sharing and planing-onset estimates for a rider on a board",
        description="Load figures for a rider on a board: buoyancy of the submerged board, the share "
        "of the load it lifts, how deep it floats alone, litres per kg, planform loading, the "
        "displacement-mode speed limit, a predicted planing-onset speed band and the smallest "
        "breaking wave that reaches it. Figures that need the board's shape are left out (null in "
        "JSON, with the reason) unless --dims or --outline is given. " + _CAUTION_SHORT,
    )
    board = p.add_argument_group("board")
    board.add_argument("--volume", metavar="LITRES", help="board volume: 30, 30L or '32.5 L'")
    board.add_argument("--board-mass", metavar="MASS", help="board mass: kg (3, 3kg) or pounds (6.6lb)")
    board.add_argument(
        "--dims",
        metavar="DIMS",
        help="length x width x thickness: \"5'10\\\" x 19 1/4\\\" x 2 7/16\\\"\", \"5'10 x 19.25 x 2.44\" "
        "or \"178 x 49 x 6.2 cm\"",
    )
    board.add_argument(
        "--outline",
        metavar="FILE",
        help="CSV of outline stations: distance from the nose, full width (header x_from_nose_m,width_m; "
        "_cm, _mm or _in also accepted)",
    )
    rider = p.add_argument_group("rider")
    rider.add_argument("--rider-mass", metavar="MASS", required=True, help="body mass: kg (80, 80kg) or pounds (176lb)")
    rider.add_argument("--gear-mass", metavar="MASS", default=None, help="wetsuit, leash and other worn gear (default 0)")
    water = p.add_argument_group("water")
    water.add_argument("--water", choices=("sea", "fresh"), default=None, help="water preset (default sea)")
    water.add_argument("--water-temp", metavar="DEGC", type=float, default=None, help="water temperature [deg C] (default 15)")
    water.add_argument("--salinity", metavar="G_PER_KG", type=float, default=None, help="absolute salinity [g/kg]; overrides the preset's")
    model = p.add_argument_group("planing model")
    model.add_argument(
        "--trim-deg",
        metavar=("LOW", "HIGH"),
        nargs=2,
        type=float,
        default=None,
        help="trim-angle range of the onset band [deg], within 2-15 (default 6 12)",
    )
    p.add_argument("--json", action="store_true", help="print the figures as JSON (SI units)")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from sessions.boards import Board
    from sessions.errors import BoardSpecError
    from sessions.load import LoadSettings, load_figures
    from sessions.physics import planing
    from sessions.physics.water import Water
    from sessions.riders import Rider

    if args.volume is None and args.dims is None and args.outline is None:
        raise BoardSpecError("give the board's --volume, --dims or both (and --outline for the shape)")
    if args.volume is None and args.dims is None:
        raise BoardSpecError("an outline alone gives no volume; add --volume or --dims")
    board = Board.from_spec(
        name="board", dims=args.dims, volume=args.volume, mass_kg=args.board_mass, outline=args.outline
    )
    rider = Rider.from_spec("rider", args.rider_mass, args.gear_mass)
    water = Water.from_inputs(args.water, temperature_c=args.water_temp, salinity_g_kg=args.salinity)
    settings = LoadSettings()
    if args.trim_deg is not None:
        low, high = sorted(args.trim_deg)
        planing.check_validity(trim_deg=low, mode="raise")
        planing.check_validity(trim_deg=high, mode="raise")
        settings = LoadSettings(trim_range_deg=(low, high))
    figures = load_figures(board, rider, water, settings=settings)
    doc = figures.to_json()
    if args.json:
        json.dump(doc, sys.stdout, indent=2, allow_nan=False)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(format_text(doc, rider_mass_kg=rider.body_mass_kg, gear_mass_kg=rider.gear_mass_kg,
                                     board_mass_kg=board.mass_kg))
    return 0


def _kmh(speed_mps: float) -> float:
    from sessions.units import mps_to_kmh

    return mps_to_kmh(speed_mps)


def format_text(doc: dict, *, rider_mass_kg: float, gear_mass_kg: float, board_mass_kg: float | None) -> str:
    """Plain-text table of a load-figures JSON document."""
    lines: list[str] = []
    w = doc["water"]
    name = w["preset"] or "custom"
    lines.append(
        f"Water: {name}, {w['temperature_c']:g} degC, {w['salinity_g_kg']:g} g/kg -> "
        f"{doc['water_density_kg_m3']:.2f} kg/m^3 (TEOS-10)"
    )
    volume = f"{doc['volume_l']:.1f} L" + (" (estimated from dimensions)" if doc["volume_is_estimate"] else "")
    lines.append(f"Board volume: {volume}")

    def row(label: str, text: str) -> None:
        lines.append(f"  {label:<31}{text}")

    if doc["total_mass_kg"] is not None:
        row("total load", f"{doc['total_mass_kg']:.1f} kg (rider {rider_mass_kg:.1f} + gear {gear_mass_kg:.1f} + "
            f"board {board_mass_kg:.1f})")
    row("buoyancy, board submerged", f"{doc['buoyancy_n']:.1f} N ({doc['buoyancy_kg']:.1f} kg)")
    if doc["lifted_share"] is not None:
        row("share of load lifted", f"{100 * doc['lifted_share']:.1f} %")
    if doc["board_float_fraction"] is not None:
        row("board alone, submerged", f"{100 * doc['board_float_fraction']:.1f} % of its volume")
    row("litres per kg of rider", f"{doc['litres_per_kg']:.3f} L/kg")
    if doc["planform_area_m2"] is not None:
        source = {"default": " (default outline: estimate)", "three widths": " (from three widths)"}.get(
            doc["outline_source"], ""
        )
        row("planform area", f"{doc['planform_area_m2']:.3f} m^2{source}")
    if doc["planform_loading_n_m2"] is not None:
        row("planform loading", f"{doc['planform_loading_n_m2']:.0f} N/m^2 ({doc['planform_loading_kg_m2']:.1f} kg/m^2)")
    if doc["displacement_speed_limit_mps"] is not None:
        v = doc["displacement_speed_limit_mps"]
        row("displacement speed limit", f"{v:.2f} m/s ({_kmh(v):.1f} km/h), hull-speed rule")
    if doc["predicted_onset_mps"] is not None:
        lo, hi = doc["predicted_onset_mps"]
        trim = doc["settings"]["trim_range_deg"]
        row("planing onset (estimate)", f"{lo:.1f}-{hi:.1f} m/s ({_kmh(lo):.0f}-{_kmh(hi):.0f} km/h) "
            f"for trim {trim[0]:g}-{trim[1]:g} deg")
        f_lo, f_hi = doc["onset_froude_vol"]
        row("  volumetric Froude number", f"{f_lo:.2f}-{f_hi:.2f}")
    if doc["min_breaking_wave_m"] is not None:
        lo, hi = doc["breaking_wave_band_m"]
        row("smallest breaking wave (est.)", f"{doc['min_breaking_wave_m']:.2f} m (for the whole band {lo:.2f}-{hi:.2f} m)")
    if doc["unavailable"]:
        reasons: dict[str, list[str]] = {}
        for key, reason in doc["unavailable"].items():
            reasons.setdefault(reason, []).append(key)
        for reason, keys in reasons.items():
            hint = " (give --dims or --outline)" if "dimensions or outline" in reason else ""
            hint = " (give --board-mass)" if "mass" in reason else hint
            lines.append(f"Not computed, {reason}{hint}: {', '.join(keys)}")
    for note in doc["notes"]:
        lines.append(f"Note: {note}")
    lines.append(f"Caution: {doc['caution']}")
    return "\n".join(lines) + "\n"
