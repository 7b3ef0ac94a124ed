"""``floatlift compare``: boards side by side, or one board model's test-ride campaign.

Two forms:

* ``floatlift compare --board A --board B [...]``: per-board distributions and the
  differences B - A with intervals, rank tests and verdicts (:mod:`sessions.compare`);
  ``--json`` prints them as strict JSON, ``--report DIR`` writes figures and a one-page
  PDF (:mod:`sessions.report`).
* ``floatlift compare --model NAME``: every version of one board model, every rider's
  results and feedback in one table.
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import math
import sys

_CAUTION_SHORT = (
    "Estimates for comparing boards, not safety advice; surf within your ability and follow local "
    "rules and lifeguards."
)


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "compare",
        help="compare boards (onset speed, rides per hour, catch success, feedback) or a model's test rides",
        description="Compare two or more boards from the session library: onset speed, rides per hour, "
        "catch success, ride duration and distance, peak speed and feedback scores, with bootstrap "
        "intervals that resample whole sessions, rank tests and a verdict for board B against board A "
        "(the first --board). With --model, list every version of one board model with each rider's "
        "results and feedback. " + _CAUTION_SHORT,
    )
    what = p.add_argument_group("what to compare")
    what.add_argument("--board", metavar="NAME", action="extend", nargs="+", default=[],
                      help="a board to compare (give two or more; the first is A, the reference)")
    what.add_argument("--model", metavar="NAME", help="show the test-ride campaign of this board model instead")
    sel = p.add_argument_group("which rides")
    sel.add_argument("--rider", metavar="NAME", action="extend", nargs="+", default=[],
                     help="only these riders (repeat or list several)")
    sel.add_argument("--from", dest="date_from", metavar="DATE", help="first day, YYYY-MM-DD (UTC)")
    sel.add_argument("--to", dest="date_to", metavar="DATE", help="last day, YYYY-MM-DD (UTC, inclusive)")
    sel.add_argument("--wave-band", metavar="LO-HI",
                     help="only rides with wave face height in [LO, HI) metres, e.g. 0.8-1.5")
    out = p.add_argument_group("output")
    out.add_argument("--db", metavar="URL", help="library database URL (default $FLOATLIFT_DB, else the local library file)")
    out.add_argument("--json", action="store_true", help="print the result as JSON (SI units; null where unknown)")
    out.add_argument("--report", metavar="DIR", help="write PNG figures and summary.pdf into DIR")
    stat = p.add_argument_group("statistics")
    stat.add_argument("--resamples", type=int, default=9999, metavar="N", help="bootstrap resamples (default 9999)")
    stat.add_argument("--seed", type=int, default=None, metavar="N", help="bootstrap seed (default fixed)")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from sessions.errors import AnalysisError

    if args.model and args.board:
        raise AnalysisError("give either --board (two or more) or --model, not both")
    if not args.model and len(args.board) < 2:
        raise AnalysisError("name at least two boards with --board, or one board model with --model")
    if args.model and (args.report or args.wave_band):
        raise AnalysisError("--report and --wave-band go with --board, not with --model")
    date_from, date_to = parse_day(args.date_from, "from"), parse_day(args.date_to, "to")
    if date_from is not None and date_to is not None and date_to < date_from:
        raise AnalysisError(f"--to {args.date_to} is before --from {args.date_from}")
    if args.model:
        return _run_campaign(args, date_from, date_to)
    return _run_compare(args, date_from, date_to)


def _open_library(url):
    from sessions.store import Library

    return Library.open(url)


def _frames(lib, args, date_from, date_to):
    riders = args.rider or None
    day_to = None if date_to is None else date_to.date()
    day_from = None if date_from is None else date_from.date()
    rides = lib.rides_frame(riders=riders, date_from=day_from, date_to=day_to)
    sessions = lib.sessions_frame(riders=riders, date_from=day_from, date_to=day_to, with_sampling=True)
    return rides, sessions


def _run_compare(args, date_from, date_to) -> int:
    from sessions import compare as cmp

    wave_band = None if args.wave_band is None else cmp.parse_wave_band(args.wave_band)
    kwargs = {"n_resamples": args.resamples}
    if args.seed is not None:
        kwargs["seed"] = args.seed
    rules = cmp.Rules(**kwargs)
    selection = cmp.Selection(
        boards=tuple(args.board), riders=tuple(args.rider),
        date_from=date_from, date_to=None if date_to is None else date_to + dt.timedelta(days=1),
        wave_band_m=wave_band,
    )
    with _open_library(args.db) as lib:
        rides, sessions = _frames(lib, args, date_from, date_to)
        specs = {}
        for name in args.board:
            try:
                if hasattr(lib, "board_object"):  # keeps measured outline stations
                    specs[name] = lib.board_object(name)
                else:
                    specs[name] = board_from_library(lib.board(name))
            except LookupError:
                continue  # compare_boards names the missing board
    comparison = cmp.compare_boards(rides, sessions, selection, rules, onset_model=cmp.board_load_model(specs))
    written = []
    if args.report:
        from sessions.report import write_report

        written = write_report(comparison, args.report)
    if args.json:
        doc = cmp.to_jsonable(comparison)
        if written:
            doc["report_files"] = [p.name for p in written]
        print(json.dumps(doc, indent=2, allow_nan=False))
    else:
        print(format_comparison(comparison))
        if written:
            print(f"\nreport written: {', '.join(str(p) for p in written)}")
    return 0


def _run_campaign(args, date_from, date_to) -> int:
    from sessions import compare as cmp

    with _open_library(args.db) as lib:
        rides, sessions = _frames(lib, args, date_from, date_to)
    table = cmp.campaign_table(rides, sessions, args.model)
    if args.json:
        rows = [{k: _json_value(v) for k, v in row.items()} for row in table.to_dict(orient="records")]
        print(json.dumps({"model": args.model, "rows": rows, "caution": cmp.CAUTION}, indent=2, allow_nan=False))
        return 0
    header = ["version", "board", "rider", "sessions", "rides", "onset m/s", "rides/h", "catch",
              "wave m", "paddle", "catch sc", "speed", "control"]
    body = [
        [str(r.board_version), str(r.board), str(r.rider), str(r.sessions), str(r.rides),
         _f(r.onset_median_mps), _f(r.rides_per_hour, 1), _f(r.catch_success), _f(r.wave_face_m, 1),
         _f(r.score_paddling, 1), _f(r.score_catching, 1), _f(r.score_speed, 1), _f(r.score_control, 1)]
        for r in table.itertuples()
    ]
    lines = [f"Test rides of board model {args.model} (medians; scores are session means)", ""]
    lines += columns(header, body)
    notes = [(f"{r.board} / {r.rider}", r.feedback) for r in table.itertuples() if r.feedback]
    if notes:
        lines += ["", "Feedback (newest first):"]
        lines += [f"  {who}: {text}" for who, text in notes]
    lines += ["", cmp.CAUTION]
    print("\n".join(lines))
    return 0


# --- helpers (pure) ------------------------------------------------------------------
def parse_day(text: str | None, what: str) -> dt.datetime | None:
    """``YYYY-MM-DD`` to midnight UTC of that day."""
    from sessions.errors import AnalysisError

    if text is None:
        return None
    try:
        day = dt.date.fromisoformat(text.strip())
    except ValueError:
        raise AnalysisError(f"--{what} must be a day written YYYY-MM-DD, got {text!r}") from None
    return dt.datetime(day.year, day.month, day.day, tzinfo=dt.timezone.utc)


def board_from_library(record: dict):
    """A :class:`sessions.boards.Board` from the library's board record (SI fields).

    The outline is the default shape for the stored length and width (the library keeps
    only the planform area, not the stations); without them the board has no outline.
    """
    from sessions.boards import Board, Outline

    length, width = record.get("length_m"), record.get("width_m")
    outline = Outline.default_for(length, width) if length and width else None
    return Board(
        name=record["name"], length_m=length, width_m=width, thickness_m=record.get("thickness_m"),
        volume_l=record.get("volume_l"), mass_kg=record.get("mass_kg"), model=record.get("model"),
        version=record.get("version"), outline=outline,
    )


def columns(header: list[str], rows: list[list[str]], gap: str = "  ") -> list[str]:
    """Left-aligned text columns sized to their widest cell."""
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(header)]
    out = [gap.join(h.ljust(w) for h, w in zip(header, widths)).rstrip()]
    out.append(gap.join("-" * w for w in widths))
    out += [gap.join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows]
    return out


def format_comparison(comparison) -> str:
    """The terminal page of a comparison."""
    from sessions import compare as cmp

    lines = ["Board comparison - " + cmp.selection_text(comparison), ""]
    lines += columns(cmp.BOARD_TABLE_HEADER, cmp.board_table_rows(comparison))
    lines += ["", "Differences, board B minus board A (median [95 % interval]; p: rank test on sessions; "
                  "r: rank-biserial on rides). Lower onset speed = planes earlier."]
    lines += columns(["metric", "A", "B", "B - A [95 % CI]", "p", "r", "verdict"],
                     cmp.difference_table_rows(comparison))
    bands = cmp.strata_lines(comparison)
    if bands:
        lines += ["", "Onset speed by wave face height:"] + [f"  {b}" for b in bands]
    fit = comparison.load_fit
    lines.append("")
    if fit is None:
        lines.append(comparison.load_fit_note)
    else:
        terms = " + ".join(f"{c:.4g} x {t}" for t, c in zip(fit.terms[1:], fit.coef[1:]))
        lines.append(f"Load fit over {fit.n_rides} rides, {fit.n_load_points} board-and-load combinations "
                     f"(R^2 {fit.r_squared:.2f}): onset = {fit.coef[0]:.3g} + {terms}")
        for s in comparison.boards:
            if s.board in fit.board_residuals:
                m, lo, hi, k = fit.board_residuals[s.board]
                word = "earlier" if m < 0 else "later"
                sure = "" if (math.isfinite(lo) and (hi < 0 or lo > 0)) else " (within noise)"
                lines.append(f"  {s.board}: planes {abs(m):.2f} m/s {word} than its load predicts "
                             f"[{_f(lo)}, {_f(hi)}], {k} sessions{sure}")
    if comparison.model_rows["model_lo_mps"].notna().any():
        lines += ["", "Measured onset against the planing model (sea water):"]
        lines += columns(
            ["board", "rider", "rides", "loading N/m2", "measured median m/s", "model band m/s"],
            [[str(r.board), str(r.rider), str(r.rides), _f(r.planform_loading_npm2, 0),
              _f(r.measured_median_mps), f"{_f(r.model_lo_mps)}-{_f(r.model_hi_mps)}"]
             for r in comparison.model_rows.itertuples()],
        )
    else:
        lines += ["", "Planing model: no band (the boards need length, width and mass in the library)."]
    if comparison.notes:
        lines += [""] + [f"Note: {n}" for n in comparison.notes]
    r = comparison.rules
    lines += ["", f"Rules: a verdict needs at least {r.min_rides} rides from {r.min_sessions} sessions per board "
                  f"({r.min_session_values} sessions for per-session figures), an interval clear of 0 and "
                  f"p < {r.alpha:g}; intervals resample whole sessions ({r.n_resamples} resamples, seed {r.seed})."]
    lines += ["", comparison.caution]
    return "\n".join(lines)


def _f(x, digits: int = 2) -> str:
    try:
        x = float(x)
    except (TypeError, ValueError):
        return "-"
    return f"{x:.{digits}f}" if math.isfinite(x) else "-"


def _json_value(v):
    if isinstance(v, float):
        return v if math.isfinite(v) else None
    if hasattr(v, "item"):
        return _json_value(v.item())
    return v


if __name__ == "__main__":  # pragma: no cover
    sys.exit("run through 'floatlift compare'")
