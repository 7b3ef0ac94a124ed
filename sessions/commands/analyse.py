"""``floatlift analyse TRACK.gpx``: states, rides and session figures of one track."""

from __future__ import annotations

import argparse
import json
import sys


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "analyse",
        help="label paddling, waiting and riding in a GPX track and list the rides",
        description="Analyse one GPX track: time paddling, waiting and riding, one line per "
        "ride (times, duration, distance, peak speed, planing-onset speed), session figures. "
        "Estimates only; surf within your ability and follow local rules and lifeguards.",
    )
    p.add_argument("track", metavar="TRACK.gpx", help="GPX file to analyse ('-' reads standard input)")
    p.add_argument("--json", action="store_true", help="print the floatlift.analysis/1 JSON document")
    p.add_argument("--states", action="store_true", help="also list every run of states in the summary")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from pathlib import Path

    from sessions.analysis import analyse_file
    from sessions.errors import TrackReadError

    if args.track == "-":
        source = sys.stdin.buffer.read()
    else:
        source = Path(args.track)
        if not source.is_file():
            raise TrackReadError(f"{args.track}: no such file")
    result = analyse_file(source)
    doc = result.to_json()
    if args.json:
        json.dump(doc, sys.stdout, indent=2, allow_nan=False)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(format_summary(doc, with_states=args.states))
    return 0


def _hms(seconds: float | None) -> str:
    if seconds is None:
        return "-"
    s = int(round(seconds))
    h, rem = divmod(s, 3600)
    m, sec = divmod(rem, 60)
    return f"{h}:{m:02d}:{sec:02d}" if h else f"{m}:{sec:02d}"


def _clock(iso: str) -> str:
    """``HH:MM:SS`` of an ISO time (UTC)."""
    return iso[11:19]


def _f(v, fmt: str) -> str:
    return "-" if v is None else format(v, fmt)


def format_summary(doc: dict, *, with_states: bool = False) -> str:
    """Readable text summary of an analysis document."""
    s = doc["session"]
    src = doc["source"]
    tis = s["time_in_state_s"]
    lines = [
        f"{src['file']}: {src['points']} fixes, every {_f(src['sampling_s'], '.1f')} s",
        f"session  {s['start'][:10]} {_clock(s['start'])}-{_clock(s['end'])} UTC, "
        f"{_hms(s['duration_s'])} in all, {_hms(s.get('water_s'))} in the water",
        "time     " + ", ".join(f"{k} {_hms(tis[k])} ({100 * (s['share_in_state'][k] or 0):.0f} %)" for k in ("shore", "paddle", "wait", "ride")),
        f"rides    {s['rides']} ({_f(s['rides_per_hour'], '.1f')} per hour in the water), missed waves {s['missed_waves']}",
        f"distance paddling {_f(s['paddle_distance_m'], '.0f')} m, riding {_f(s['ride_distance_m'], '.0f')} m; "
        f"peak speed {_f(s['peak_speed_mps'], '.1f')} m/s",
        f"onset    session median planing onset {_f(s.get('median_onset_speed_mps'), '.2f')} m/s",
    ]
    if s.get("shore_direction") == "unknown":
        lines.append("note     the direction of the shore could not be found; states rely on speed alone")
    if doc["rides"]:
        lines.append("")
        lines.append("  #  catch     start     end       time   dist   peak   mean  onset [90 % interval]")
        lines.append("                                     s      m    m/s    m/s   m/s")
        for r in doc["rides"]:
            ci = r["onset_ci_mps"]
            onset = "-" if r["onset_speed_mps"] is None else f"{r['onset_speed_mps']:.2f}"
            if ci is not None:
                onset += f" [{ci[0]:.2f}-{ci[1]:.2f}]"
            lines.append(
                f"{r['index'] + 1:3d}  {_clock(r['catch_start'])}  {_clock(r['start'])}  {_clock(r['end'])}"
                f"  {r['duration_s']:5.1f}  {r['distance_m']:5.0f}  {r['peak_speed_mps']:5.1f}  {r['mean_speed_mps']:5.1f}  {onset}"
            )
        for r in doc["rides"]:
            if r["onset_speed_mps"] is None and r.get("onset_reason"):
                code, _, detail = r["onset_reason"].partition(": ")
                lines.append(f"     no onset for ride {r['index'] + 1}: {detail or code}")
    if with_states:
        lines.append("")
        for st in doc["states"]:
            lines.append(f"  {_clock(st['start'])}-{_clock(st['end'])}  {st['state']}")
    lines.append("")
    lines.append(doc.get("caution", ""))
    return "\n".join(lines) + "\n"
