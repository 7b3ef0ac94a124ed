"""``floatlift simulate``: write a simulated session (GPX) and its truth (JSON) beside it."""

from __future__ import annotations

import argparse

CAUTION = (
    "Simulated data for testing only; it predicts nothing about real surf. "
    "Surf within your ability and follow local rules and lifeguards."
)


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "simulate",
        help="write a simulated surf session with known truth",
        description="Simulate a surf session with consumer-GPS errors and write it as GPX "
        "(gzip-compressed when OUT ends in .gz) plus <stem>.truth.json beside it. "
        + CAUTION,
    )
    p.add_argument("out", metavar="OUT.gpx", help="track file to write (.gpx or .gpx.gz)")
    p.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    p.add_argument("--sampling", choices=("1hz", "5hz", "smart"), default="1hz", help="fix schedule (default 1hz)")
    p.add_argument("--duration-min", type=float, default=90.0, metavar="M", help="session length in minutes (default 90)")
    p.add_argument("--style", choices=("short", "long"), default="short", help="riding style (default short)")
    p.add_argument(
        "--onset-speed", type=float, default=3.2, metavar="MPS", help="board planing onset speed in m/s (default 3.2)"
    )
    p.add_argument("--wave-face", type=float, default=1.2, metavar="M", help="wave face height in m (default 1.2)")
    p.add_argument("--reported-speed", action="store_true", help="add a device speed to each fix")
    p.add_argument("--elevation", action="store_true", help="add an elevation to each fix")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from pathlib import Path

    from sessions.errors import SimulationError
    from sessions.simulate import SimConfig, simulate_session

    out = Path(args.out)
    if not (out.name.lower().endswith(".gpx") or out.name.lower().endswith(".gpx.gz")):
        raise SimulationError(f"{out.name}: the output name must end in .gpx or .gpx.gz")
    if not out.parent.is_dir():
        raise SimulationError(f"{out.name}: the folder to write into does not exist")
    for option, value, lo, hi in (
        ("--duration-min", args.duration_min, 5.0, 360.0),
        ("--onset-speed", args.onset_speed, 1.5, 6.0),
        ("--wave-face", args.wave_face, 0.3, 4.0),
    ):
        if not lo <= value <= hi:  # also rejects nan
            raise SimulationError(f"{option} {value:g} is outside {lo:g} to {hi:g}")
    config = SimConfig(
        seed=args.seed,
        sampling=args.sampling,
        duration_s=args.duration_min * 60.0,
        style=args.style,
        board_onset_mps=args.onset_speed,
        wave_face_m=args.wave_face,
        reported_speed=args.reported_speed,
        elevation=args.elevation,
        name=f"simulated session, seed {args.seed}",
    )
    sim = simulate_session(config)
    try:
        track_path, truth_path = sim.write(out)
    except OSError as exc:
        raise SimulationError(f"{out.name}: cannot write: {exc.strerror or exc}") from exc
    totals = sim.truth["totals"]
    print(f"wrote {track_path} ({len(sim.points)} fixes, {totals['duration_s'] / 60:.1f} min)")
    print(f"wrote {truth_path} ({totals['rides']} rides, {totals['missed_waves']} missed waves)")
    print(CAUTION)
    return 0
