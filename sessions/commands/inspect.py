"""``floatlift inspect TRACK.gpx``: what the GPX reader found in a file."""

from __future__ import annotations

import argparse
import json
import sys

SCHEMA = "floatlift.inspect/1"


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "inspect",
        help="show what was read from a GPX track (points, times, sampling, gaps)",
        description="Read one GPX track (plain or gzip) and report what was found: points, "
        "creator, start and end (UTC), span, sampling interval and its irregularity, segments, "
        "gaps, merged duplicates, reordered points, reported speed and elevation. "
        "Exit status 0 when the file reads, 2 when it is refused (reason on one line).",
    )
    p.add_argument("track", metavar="TRACK.gpx", help="GPX file to read ('-' reads standard input)")
    p.add_argument("--json", action="store_true", help=f"print a {SCHEMA} JSON document")
    p.add_argument(
        "--gap-s",
        type=_positive,
        default=None,
        metavar="SECONDS",
        help="pauses longer than this count as gaps (default 60)",
    )
    p.add_argument(
        "--max-mb",
        type=_positive,
        default=None,
        metavar="MB",
        help="refuse files larger than this many megabytes, after decompression (default 200 MiB)",
    )
    p.set_defaults(func=run)


def _positive(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}") from None
    if not (value > 0 and value < float("inf")):
        raise argparse.ArgumentTypeError(f"must be a positive number, got {text!r}")
    return value


def run(args: argparse.Namespace) -> int:
    from sessions.gpx import DEFAULT_MAX_BYTES, read_gpx, track_summary
    from sessions.track import DEFAULT_GAP_S

    kw = {
        "gap_s": DEFAULT_GAP_S if args.gap_s is None else args.gap_s,
        "max_bytes": DEFAULT_MAX_BYTES if args.max_mb is None else max(1, int(args.max_mb * 1e6)),
    }
    source = sys.stdin.buffer if args.track == "-" else args.track
    summary = track_summary(read_gpx(source, **kw))
    if args.json:
        json.dump({"schema": SCHEMA, **summary}, sys.stdout, indent=2, allow_nan=False)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(format_summary(summary))
    return 0


def _hms(seconds: float) -> str:
    s = int(round(seconds))
    h, rem = divmod(s, 3600)
    m, sec = divmod(rem, 60)
    return f"{h}:{m:02d}:{sec:02d}" if h else f"{m}:{sec:02d}"


def _short(text: str | None, limit: int = 70) -> str:
    if text is None:
        return "-"
    text = " ".join(text.split())
    return text if len(text) <= limit else text[: limit - 1] + "…"


def _share(count: int, total: int) -> str:
    return f"{count:,} of {total:,} points ({100.0 * count / total:.0f} %)" if count else "none"


def _secs(seconds: float) -> str:
    return f"{seconds:.3g} s" if seconds < 100 else _hms(seconds)


def format_summary(s: dict) -> str:
    """Plain-text lines of a :func:`sessions.gpx.track_summary` dict."""
    n = s["points"]
    in_file = s["points_in_file"]
    pts = f"{n:,} timed"
    if s["untimed_dropped"]:
        pts += f" ({in_file:,} in the file; {s['untimed_dropped']:,} without a time left out)"
    g = s["gaps"]
    gaps = f"{g['count']} longer than {g['threshold_s']:g} s"
    if g["count"]:
        gaps += f"; longest {_hms(g['longest_s'])} from {g['longest_start_utc']}"
    rows = [
        ("file", f"{s['file']} (sha256 {s['sha256'][:12]}…)"),
        ("creator", _short(s["creator"])),
        ("GPX version", s["gpx_version"] or "-"),
        ("points", pts),
        ("start", s["start_utc"]),
        ("end", s["end_utc"]),
        ("span", _hms(s["span_s"])),
        (
            "sampling",
            f"median {_secs(s['interval_median_s'])} (min {_secs(s['interval_min_s'])}, max "
            f"{_secs(s['interval_max_s'])}); {100.0 * s['interval_irregular_share']:.1f} % of intervals "
            "irregular (off the median by more than half)",
        ),
        ("segments", f"{s['segments']}"),
        ("gaps", gaps),
        ("duplicates", f"{s['duplicates_merged']:,} merged (same time as a kept point)"),
        ("reordered", f"{s['reordered']:,} points were out of time order"),
        ("reported speed", _share(s["reported_speed_points"], n)),
        ("elevation", _share(s["elevation_points"], n)),
    ]
    width = max(len(k) for k, _ in rows)
    return "".join(f"{k:<{width}}  {v}\n" for k, v in rows)
