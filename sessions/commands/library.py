"""Session-library commands: import, list, show, assign, delete, reanalyse, rider, board,
feedback, conditions, export and demo.

All of them take ``--db URL`` (default: ``$FLOATLIFT_DB`` or the embedded SQLite file in
the user's data folder). The functions here parse options, call :mod:`sessions.store`
and format; nothing is computed here.
"""

from __future__ import annotations

import argparse
import functools
import json
import re
import sys

CAUTION = "Estimates only: surf within your ability and follow local rules and lifeguards."


# --- database failures ------------------------------------------------------------------------
def _store_guard(run):
    """Wrap a command so a database failure met mid-way (server restarted or gone, disk full,
    read-only file) reaches the user as one line (:class:`StoreError`), never a traceback.

    Every write is its own transaction, so what was stored before the failure stays whole.
    """

    @functools.wraps(run)
    def guarded(args):
        import sqlalchemy as sa

        from sessions.errors import StoreError
        from sessions.store import db

        try:
            return run(args)
        except sa.exc.DBAPIError as exc:  # the driver's error: no SQL text or parameters shown
            raise StoreError(f"the library database failed: {db._short(exc)}") from exc

    return guarded


# --- shared options -------------------------------------------------------------------------
def _db_option(p: argparse.ArgumentParser) -> None:
    p.add_argument("--db", metavar="URL", default=None,
                   help="library database URL (sqlite:///FILE or postgresql+psycopg://USER@HOST/DB); "
                        "default: $FLOATLIFT_DB or the library file in your data folder")


def _json_option(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", action="store_true", help="print JSON instead of text")


def _filter_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--rider", action="append", metavar="NAME", help="only this rider (repeatable)")
    p.add_argument("--board", action="append", metavar="NAME", help="only this board (repeatable)")
    p.add_argument("--from", dest="date_from", metavar="DATE", help="sessions on or after this day (YYYY-MM-DD, UTC)")
    p.add_argument("--to", dest="date_to", metavar="DATE", help="sessions on or before this day (YYYY-MM-DD, UTC)")


def _filters(args) -> dict:
    return {"riders": args.rider, "boards": args.board, "date_from": args.date_from, "date_to": args.date_to}


def _conditions_options(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("conditions (all optional)")
    g.add_argument("--wave-face", metavar="HEIGHT", help="breaking wave face height: metres, or with ft (1.2, 4ft)")
    g.add_argument("--period", metavar="S", help="swell period [s]")
    g.add_argument("--wind", metavar="SPEED", help="wind speed: m/s, or with kn or km/h (5, 12kn)")
    g.add_argument("--wind-from", metavar="DEG", help="direction the wind blows from [deg, 0 = north]")
    g.add_argument("--water-temp", metavar="C", help="water temperature [degC]")
    g.add_argument("--salinity", metavar="G_KG", help="absolute salinity [g/kg]")
    g.add_argument("--water", metavar="PRESET", help="water preset: sea or fresh")
    g.add_argument("--tide", metavar="M", help="tide height [m]")
    g.add_argument("--tide-phase", metavar="PHASE", help="low, rising, high or falling")


def _conditions(args) -> dict:
    out = {}
    if args.wave_face is not None:
        out["wave_face_m"] = parse_length_m(args.wave_face, "wave face")
    if args.wind is not None:
        out["wind_speed_mps"] = parse_speed_mps(args.wind, "wind")
    for opt, key in (("period", "period_s"), ("wind_from", "wind_from_deg"), ("water_temp", "water_temp_c"),
                     ("salinity", "salinity_g_kg"), ("tide", "tide_m")):
        value = getattr(args, opt)
        if value is not None:
            out[key] = _number(value, opt.replace("_", "-"))
    if args.water is not None:
        out["water_preset"] = args.water.strip().lower()
    if args.tide_phase is not None:
        out["tide_phase"] = args.tide_phase.strip().lower()
    return out


def _jobs_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--jobs", "-j", type=int, metavar="N", default=None,
                   help="analyse in N worker processes (default: number of cores)")
    p.add_argument("--quiet", "-q", action="store_true", help="no progress bar")


# --- registration ---------------------------------------------------------------------------------
def register(subparsers) -> None:
    p = subparsers.add_parser(
        "import", help="analyse GPX tracks and store them in the library",
        description="Analyse GPX tracks (.gpx, .gpx.gz, folders searched recursively, zip archives "
        "read in memory) and store each session once (a file already stored, by content, is skipped). "
        "Rider, board and conditions are given as options or by a manifest.")
    p.add_argument("paths", nargs="*", metavar="PATH", help="track files, folders or zip archives")
    p.add_argument("--manifest", metavar="FILE", help="manifest TOML naming riders, boards, tracks and conditions")
    p.add_argument("--rider", metavar="NAME", help="rider of these sessions (must exist: 'floatlift rider add')")
    p.add_argument("--board", metavar="NAME", help="board of these sessions (must exist: 'floatlift board add')")
    _conditions_options(p)
    _jobs_options(p)
    _db_option(p)
    _json_option(p)
    p.set_defaults(func=_store_guard(run_import))

    p = subparsers.add_parser("list", help="list the sessions in the library")
    _filter_options(p)
    _db_option(p)
    _json_option(p)
    p.set_defaults(func=_store_guard(run_list))

    p = subparsers.add_parser("show", help="show one stored session with its rides")
    p.add_argument("session_id", type=int, metavar="ID")
    _db_option(p)
    _json_option(p)
    p.set_defaults(func=_store_guard(run_show))

    p = subparsers.add_parser("assign", help="set the rider and/or board of stored sessions")
    p.add_argument("session_ids", type=int, nargs="+", metavar="ID")
    p.add_argument("--rider", metavar="NAME", help="rider name ('' removes the link)")
    p.add_argument("--board", metavar="NAME", help="board name ('' removes the link)")
    _db_option(p)
    p.set_defaults(func=_store_guard(run_assign))

    p = subparsers.add_parser("delete", help="remove a stored session (its track, rides, feedback)")
    p.add_argument("session_ids", type=int, nargs="+", metavar="ID")
    _db_option(p)
    p.set_defaults(func=_store_guard(run_delete))

    p = subparsers.add_parser(
        "reanalyse", help="re-run the analysis of stored sessions from their stored tracks",
        description="Re-run the analysis of stored sessions: by default those analysed by an older "
        "version of the analysis; --all for every session, or name session ids.")
    p.add_argument("session_ids", type=int, nargs="*", metavar="ID")
    p.add_argument("--all", action="store_true", help="every session, whatever its analysis version")
    _jobs_options(p)
    _db_option(p)
    _json_option(p)
    p.set_defaults(func=_store_guard(run_reanalyse))

    _register_rider(subparsers)
    _register_board(subparsers)

    p = subparsers.add_parser("feedback", help="record a rider's 1-5 scores and notes for a session")
    p.add_argument("session_id", type=int, metavar="ID")
    for name in ("paddling", "catching", "speed", "control"):
        p.add_argument(f"--{name}", metavar="1-5", help=f"score for {name} (1 poor .. 5 excellent)")
    p.add_argument("--note", metavar="TEXT", help="free text")
    _db_option(p)
    _json_option(p)
    p.set_defaults(func=_store_guard(run_feedback))

    p = subparsers.add_parser("conditions", help="record the conditions of a session")
    p.add_argument("session_id", type=int, metavar="ID")
    _conditions_options(p)
    _db_option(p)
    _json_option(p)
    p.set_defaults(func=_store_guard(run_conditions))

    p = subparsers.add_parser("export", help="write rides or sessions to CSV or Parquet")
    p.add_argument("table", choices=("rides", "sessions"))
    p.add_argument("out", metavar="FILE", help="output file (.csv or .parquet)")
    p.add_argument("--format", choices=("csv", "parquet"), help="default: from the file name")
    _filter_options(p)
    _db_option(p)
    p.set_defaults(func=_store_guard(run_export))

    p = subparsers.add_parser(
        "demo", help="build a demo library from the invented sample scenario",
        description="Build a fresh demo library from the sample tracks shipped with floatlift (an "
        "invented beach, riders and boards), replacing an older demo library, and print a summary.")
    p.add_argument("--no-serve", action="store_true", help="only build the library; do not start the dashboard")
    p.add_argument("--jobs", "-j", type=int, metavar="N", default=None, help="worker processes")
    p.add_argument("--db", metavar="URL", default=None,
                   help="build into this (empty) database instead of the demo file in your data folder")
    _json_option(p)
    p.set_defaults(func=_store_guard(run_demo))


def _register_catalogue(subparsers, noun: str, options, run, edit_help: str, show_help: str) -> None:
    """``floatlift NOUN add|edit|list|show`` for a catalogue of riders or boards.

    ``options(parser)`` adds the attribute options shared by ``add`` and ``edit``; ``run``
    maps each action to its handler.
    """
    p = subparsers.add_parser(noun, help=f"add, change, list and show {noun}s")
    sub = p.add_subparsers(dest="action", metavar="ACTION", required=True, parser_class=type(p))
    helps = {"add": f"add a {noun}", "edit": edit_help, "list": f"list {noun}s", "show": show_help}
    for action, help_text in helps.items():
        q = sub.add_parser(action, help=help_text)
        if action != "list":
            q.add_argument("name", metavar="NAME")
        if action in ("add", "edit"):
            options(q)
        if action == "edit":
            q.add_argument("--name", dest="new_name", metavar="NEW", help=f"rename the {noun}")
        _db_option(q)
        _json_option(q)
        q.set_defaults(func=_store_guard(run[action]))


def _rider_options(q) -> None:
    q.add_argument("--mass", metavar="MASS", help="body mass: kg, or with lb (72, 72kg, 159lb)")
    q.add_argument("--on", metavar="DATE", help="day of that weighing (YYYY-MM-DD; default today)")
    q.add_argument("--gear", metavar="MASS", help="worn gear mass (wetsuit, leash): kg or lb")
    q.add_argument("--stance", choices=("regular", "goofy"))
    q.add_argument("--ability", metavar="LEVEL", help="beginner, improver, intermediate, advanced or expert")
    q.add_argument("--note", metavar="TEXT")


def _board_options(q) -> None:
    q.add_argument("--dims", metavar="L x W x T",
                   help="length x width x thickness in the trade's notation, e.g. \"5'10 x 19 1/4 x 2 7/16\"")
    q.add_argument("--volume", metavar="LITRES", help="volume, e.g. 28.6L (estimated from --dims when missing)")
    q.add_argument("--mass", metavar="MASS", help="board mass: kg, or with lb")
    q.add_argument("--outline", metavar="CSV", help="outline stations: x_from_nose,width per line (m, cm, mm or in)")
    q.add_argument("--construction", metavar="TEXT", help="e.g. PU/polyester, EPS/epoxy")
    q.add_argument("--fins", metavar="TEXT", help="e.g. thruster, quad, single")
    q.add_argument("--model", metavar="TEXT", help="model name (a shaper's test series)")
    q.add_argument("--version", dest="board_version", metavar="TEXT", help="version within the model")
    q.add_argument("--note", metavar="TEXT")


def _register_rider(subparsers) -> None:
    _register_catalogue(
        subparsers, "rider", _rider_options,
        {"add": run_rider_add, "edit": run_rider_edit, "list": run_rider_list, "show": run_rider_show},
        edit_help="change a rider (a new --mass is added to the mass history)",
        show_help="show a rider with the mass history",
    )


def _register_board(subparsers) -> None:
    _register_catalogue(
        subparsers, "board", _board_options,
        {"add": run_board_add, "edit": run_board_edit, "list": run_board_list, "show": run_board_show},
        edit_help="change a board",
        show_help="show a board",
    )


# --- helpers -----------------------------------------------------------------------------------
def _open(args):
    from sessions.store import Library

    return Library.open(args.db)


def _print_json(doc) -> None:
    json.dump(doc, sys.stdout, indent=2, allow_nan=False, default=str)
    sys.stdout.write("\n")


def _print_record(args, label: str, record: dict) -> None:
    """A session's stored feedback or conditions: JSON with --json, else one line of the set fields."""
    if args.json:
        _print_json(record)
    else:
        print(f"session {args.session_id} {label}: " + ", ".join(f"{k} {v}" for k, v in record.items() if v is not None))


def _number(text: str, what: str) -> float:
    from sessions.errors import LibraryInputError

    try:
        return float(str(text).strip())
    except ValueError as exc:
        raise LibraryInputError(f"--{what}: not a number: {text!r}") from exc


_UNIT_RE = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+))\s*([a-zA-Z/]*)\s*$")


def parse_length_m(text: str, what: str) -> float:
    """Length in metres from ``1.2``, ``1.2m``, ``4ft`` or ``4'`` (1 ft = 0.3048 m exactly)."""
    from sessions.errors import LibraryInputError
    from sessions.units import FT_M

    t = str(text).strip().replace("'", "ft")
    m = _UNIT_RE.match(t)
    factors = {"": 1.0, "m": 1.0, "ft": FT_M, "feet": FT_M, "foot": FT_M}
    if not m or m.group(2).lower() not in factors:
        raise LibraryInputError(f"{what}: {text!r} is not a length (use metres, or feet as 4ft)")
    return float(m.group(1)) * factors[m.group(2).lower()]


def parse_speed_mps(text: str, what: str) -> float:
    """Speed in m/s from ``5``, ``5m/s``, ``12kn``, ``20km/h`` or ``15mph``."""
    from sessions.errors import LibraryInputError
    from sessions.units import KMH_MPS, KN_MPS, MPH_MPS

    m = _UNIT_RE.match(str(text))
    factors = {"": 1.0, "m/s": 1.0, "mps": 1.0, "kn": KN_MPS, "kt": KN_MPS, "kts": KN_MPS, "knots": KN_MPS,
               "km/h": KMH_MPS, "kmh": KMH_MPS, "kph": KMH_MPS, "mph": MPH_MPS}
    if not m or m.group(2).lower() not in factors:
        raise LibraryInputError(f"{what}: {text!r} is not a speed (use m/s, or 12kn, 20km/h, 15mph)")
    return float(m.group(1)) * factors[m.group(2).lower()]


def _day(text: str | None):
    import datetime as dt

    from sessions.errors import LibraryInputError

    if text is None:
        return None
    try:
        return dt.datetime.combine(dt.date.fromisoformat(text.strip()), dt.time(12), tzinfo=dt.timezone.utc)
    except ValueError as exc:
        raise LibraryInputError(f"--on: {text!r} is not a day (YYYY-MM-DD)") from exc


def _progress(total: int, quiet: bool, desc: str):
    """A tqdm bar on stderr (off when quiet or when stderr is not a terminal); returns (step, close)."""
    from tqdm import tqdm

    bar = tqdm(total=total, desc=desc, unit="file", file=sys.stderr,
               disable=quiet or not sys.stderr.isatty(), leave=False)
    return bar.update, bar.close


def _hms(seconds) -> str:
    if seconds is None:
        return "-"
    s = int(round(float(seconds)))
    h, rem = divmod(s, 3600)
    m, sec = divmod(rem, 60)
    return f"{h}:{m:02d}:{sec:02d}"


def _fmt(value, spec: str = ".2f", none: str = "-") -> str:
    if value is None:
        return none
    try:
        if value != value:  # NaN
            return none
    except TypeError:
        pass
    return format(value, spec)


def _table(rows: list[list[str]], header: list[str]) -> str:
    widths = [max(len(str(x)) for x in col) for col in zip(header, *rows)]
    lines = ["  ".join(str(h).ljust(w) for h, w in zip(header, widths))]
    lines += ["  ".join(str(c).ljust(w) for c, w in zip(r, widths)) for r in rows]
    return "\n".join(line.rstrip() for line in lines) + "\n"


# --- import / reanalyse ---------------------------------------------------------------------------------
def run_import(args) -> int:
    from sessions.errors import LibraryInputError
    from sessions.store.importer import Assignment, import_manifest, import_paths

    if not args.paths and not args.manifest:
        raise LibraryInputError("give track files, folders or zip archives, or --manifest FILE")
    if args.jobs is not None and args.jobs < 1:
        raise LibraryInputError("--jobs must be at least 1")
    conditions = _conditions(args)
    with _open(args) as lib:
        state = {}

        def on_total(n):
            state["step"], state["close"] = _progress(n, args.quiet, "importing")

        try:
            if args.manifest:
                if args.paths or args.rider or args.board or conditions:
                    raise LibraryInputError("--manifest gives tracks, riders, boards and conditions itself; "
                                            "do not combine it with paths or those options")
                summary = import_manifest(lib, args.manifest, workers=args.jobs,
                                          progress=lambda n: state["step"](n), on_total=on_total)
            else:
                from sessions.store.library import _check_conditions

                _check_conditions(conditions)  # refuse bad options before any work
                summary = import_paths(lib, args.paths, Assignment(args.rider, args.board, conditions),
                                       workers=args.jobs, progress=lambda n: state["step"](n),
                                       on_total=on_total)
        finally:
            if "close" in state:
                state["close"]()
    if args.json:
        _print_json(summary.to_json())
    else:
        print(summary.describe())
    if summary.refused and not summary.imported and not summary.already_present:
        # nothing usable at all: say so on stderr and exit 2 (partial refusals exit 0)
        raise LibraryInputError(f"no track imported: {len(summary.refused)} refused (reasons above)")
    return 0


def run_reanalyse(args) -> int:
    from sessions.errors import LibraryInputError
    from sessions.store.importer import reanalyse

    if args.all and args.session_ids:
        raise LibraryInputError("give session ids or --all, not both")
    if args.jobs is not None and args.jobs < 1:
        raise LibraryInputError("--jobs must be at least 1")
    with _open(args) as lib:
        state = {}

        def on_total(n):
            state["step"], state["close"] = _progress(n, args.quiet, "re-analysing")

        try:
            summary = reanalyse(lib, everything=args.all, session_ids=args.session_ids or None,
                                workers=args.jobs, progress=lambda n: state["step"](n), on_total=on_total)
        finally:
            if "close" in state:
                state["close"]()
    if args.json:
        _print_json(summary.to_json())
    else:
        print(f"re-analysed {len(summary.reanalysed)}, already up to date {summary.up_to_date}, "
              f"failed {len(summary.failed)}")
        for f in summary.failed:
            print(f"  session {f['id']}: {f['reason']}")
    return 0


# --- sessions ------------------------------------------------------------------------------------
def run_list(args) -> int:
    with _open(args) as lib:
        sessions = lib.sessions(**_filters(args))
    if args.json:
        _print_json(sessions)
        return 0
    if not sessions:
        print("no sessions (add some with 'floatlift import')")
        return 0
    rows = [[s["id"], s["start"][:16].replace("T", " "), _hms(s["duration_s"]), s["rider"] or "-",
             s["board"] or "-", s["rides"], s["source_file"].replace("\\", "/").rsplit("/", 1)[-1]]
            for s in sessions]
    sys.stdout.write(_table(rows, ["id", "start (UTC)", "length", "rider", "board", "rides", "file"]))
    return 0


def format_session(d: dict) -> str:
    """Text summary of :meth:`Library.session` output."""
    out = [f"session {d['id']}  {d['start'][:19].replace('T', ' ')} UTC  ({_hms(d['duration_s'])})",
           f"  file      {d['source_file']}  ({d['points']} fixes, sha256 {d['sha256'][:12]}...)",
           f"  rider     {d['rider'] or '-'}",
           f"  board     {d['board'] or '-'}"]
    b = d.get("board_detail")
    if b:
        extra = [f"{_fmt(b['volume_l'], '.1f')} L", f"{_fmt(b['planform_area_m2'], '.3f')} m2"]
        extra += [f"{k} {b[k]}" for k in ("model", "version") if b.get(k)]
        out[-1] += f"  ({', '.join(extra)})"
    t = d["time_in_state_s"]
    out.append(f"  time      paddle {_hms(t['paddle'])}, wait {_hms(t['wait'])}, ride {_hms(t['ride'])}, "
               f"shore {_hms(t['shore'])}")
    out.append(f"  rides     {d['rides']} ({_fmt(d['rides_per_hour'], '.1f')} per hour), missed waves "
               f"{d['missed_waves']}, peak speed {_fmt(d['peak_speed_mps'], '.1f')} m/s")
    c = d.get("conditions")
    if c:
        out.append(f"  conditions {format_conditions(c)}")
    f = d.get("feedback")
    if f:
        scores = ", ".join(f"{k} {v}" for k, v in f.items() if k != "note" and v is not None)
        note = f"  \"{f['note']}\"" if f.get("note") else ""
        out.append(f"  feedback  {scores or '-'}{note}")
    if d["ride_list"]:
        rows = [[r["index"], r["start"][11:19], _fmt(r["duration_s"], ".0f"), _fmt(r["distance_m"], ".0f"),
                 _fmt(r["peak_speed_mps"], ".1f"), _fmt(r["onset_speed_mps"], ".2f"),
                 "-" if not r["onset_ci_mps"] else f"{r['onset_ci_mps'][0]:.2f}-{r['onset_ci_mps'][1]:.2f}"]
                for r in d["ride_list"]]
        out.append("")
        out.append(_table(rows, ["ride", "start", "s", "m", "peak m/s", "onset m/s", "onset range"]).rstrip())
    out.append(f"  analysis version {d['analysis_version']}.  {CAUTION}")
    return "\n".join(out) + "\n"


def format_conditions(c: dict) -> str:
    """One line of conditions with units; missing ones are left out."""
    from sessions.units import mps_to_knots

    parts = []
    units = (("wave_face_m", "wave face {:.1f} m"), ("period_s", "period {:.0f} s"),
             ("water_temp_c", "water {:.1f} degC"), ("salinity_g_kg", "salinity {:.1f} g/kg"),
             ("tide_m", "tide {:.1f} m"))
    for key, text in units:
        if c.get(key) is not None:
            parts.append(text.format(c[key]))
    if c.get("wind_speed_mps") is not None:
        parts.append(f"wind {c['wind_speed_mps']:.1f} m/s ({mps_to_knots(c['wind_speed_mps']):.0f} kn)")
    if c.get("wind_from_deg") is not None:
        parts.append(f"from {c['wind_from_deg']:.0f} deg")
    for key in ("water_preset", "tide_phase"):
        if c.get(key):
            parts.append(("tide " if key == "tide_phase" else "") + c[key])
    if c.get("note"):
        parts.append(c["note"])
    return ", ".join(parts) if parts else "-"


def run_show(args) -> int:
    with _open(args) as lib:
        d = lib.session(args.session_id)
    if args.json:
        _print_json(d)
    else:
        sys.stdout.write(format_session(d))
    return 0


def run_assign(args) -> int:
    from sessions.errors import LibraryInputError
    from sessions.store.library import _UNSET

    if args.rider is None and args.board is None:
        raise LibraryInputError("give --rider and/or --board")
    with _open(args) as lib:
        for sid in args.session_ids:
            lib.assign(sid, rider=_UNSET if args.rider is None else (args.rider or None),
                       board=_UNSET if args.board is None else (args.board or None))
    print(f"updated {len(args.session_ids)} session(s)")
    return 0


def run_delete(args) -> int:
    with _open(args) as lib:
        for sid in args.session_ids:
            lib.delete_session(sid)
    print(f"deleted {len(args.session_ids)} session(s)")
    return 0


def run_feedback(args) -> int:
    from sessions.errors import LibraryInputError

    fields = {n: getattr(args, n) for n in ("paddling", "catching", "speed", "control") if getattr(args, n) is not None}
    if args.note is not None:
        fields["note"] = args.note
    if not fields:
        raise LibraryInputError("give at least one of --paddling, --catching, --speed, --control, --note")
    with _open(args) as lib:
        fb = lib.set_feedback(args.session_id, **fields)
    _print_record(args, "feedback", fb)
    return 0


def run_conditions(args) -> int:
    from sessions.errors import LibraryInputError

    cond = _conditions(args)
    if not cond:
        raise LibraryInputError("give at least one condition (see 'floatlift conditions --help')")
    with _open(args) as lib:
        out = lib.set_conditions(args.session_id, **cond)
    _print_record(args, "conditions", out)
    return 0


def run_export(args) -> int:
    from sessions.store.export import export_table, format_for

    format_for(args.out, args.format)  # refuse a bad name before touching the database
    with _open(args) as lib:
        n = export_table(lib, args.table, args.out, args.format, **_filters(args))
    print(f"wrote {n} {args.table} to {args.out}", file=sys.stderr)
    return 0


# --- riders and boards ------------------------------------------------------------------------------------
def _rider_fields(args) -> dict:
    from sessions.riders import parse_mass_kg

    out = {}
    if args.gear is not None:
        out["gear_mass_kg"] = parse_mass_kg(args.gear, what="gear mass")
    if args.stance is not None:
        out["stance"] = args.stance
    if args.ability is not None:
        out["ability"] = args.ability.strip().lower()
    if args.note is not None:
        out["note"] = args.note
    if args.mass is not None:
        out["body_mass_kg"] = parse_mass_kg(args.mass, what="rider mass")
        out["measured_at"] = _day(args.on)
    return out


def _show_rider(r: dict, as_json: bool) -> None:
    if as_json:
        _print_json(r)
        return
    print(f"{r['name']}: body {_fmt(r['body_mass_kg'], '.1f')} kg, gear {_fmt(r['gear_mass_kg'], '.1f')} kg, "
          f"stance {r['stance'] or '-'}, ability {r['ability'] or '-'}"
          + (f", {r['sessions']} session(s)" if "sessions" in r else ""))
    for m in r["mass_history"]:
        print(f"  {m['measured_at'][:10]}  {m['body_mass_kg']:.1f} kg")


def run_rider_add(args) -> int:
    with _open(args) as lib:
        _show_rider(lib.add_rider(args.name, **_rider_fields(args)), args.json)
    return 0


def run_rider_edit(args) -> int:
    from sessions.errors import LibraryInputError

    fields = _rider_fields(args)
    if not fields and args.new_name is None:
        raise LibraryInputError("nothing to change (see 'floatlift rider edit --help')")
    with _open(args) as lib:
        _show_rider(lib.edit_rider(args.name, new_name=args.new_name, **fields), args.json)
    return 0


def run_rider_list(args) -> int:
    with _open(args) as lib:
        riders = lib.riders()
    if args.json:
        _print_json(riders)
    elif not riders:
        print("no riders (add one with 'floatlift rider add NAME --mass 72kg')")
    else:
        sys.stdout.write(_table([[r["name"], _fmt(r["body_mass_kg"], ".1f"), _fmt(r["gear_mass_kg"], ".1f"),
                                  r["stance"] or "-", r["ability"] or "-", r["sessions"]] for r in riders],
                                ["rider", "body kg", "gear kg", "stance", "ability", "sessions"]))
    return 0


def run_rider_show(args) -> int:
    with _open(args) as lib:
        _show_rider(lib.rider(args.name), args.json)
    return 0


def _board_spec(args, base=None):
    """A :class:`sessions.boards.Board` from the options (over *base* when editing)."""
    from sessions.boards import Board

    name = args.new_name if getattr(args, "new_name", None) else args.name
    if base is None:
        return Board.from_spec(name=name, dims=args.dims, volume=args.volume, mass_kg=args.mass,
                               outline=args.outline, construction=args.construction, fins=args.fins,
                               model=args.model, version=args.board_version)
    dims = args.dims if args.dims is not None else base.dimensions
    outline = args.outline if args.outline is not None else (None if args.dims is not None else base.outline)
    if outline is not None and getattr(outline, "source", None) == "default" and args.dims is None:
        outline = None  # rebuilt from the dimensions
    return Board.from_spec(
        name=name, dims=dims, volume=args.volume if args.volume is not None else base.volume_l,
        mass_kg=args.mass if args.mass is not None else base.mass_kg, outline=outline,
        construction=args.construction if args.construction is not None else base.construction,
        fins=args.fins if args.fins is not None else base.fins,
        model=args.model if args.model is not None else base.model,
        version=args.board_version if args.board_version is not None else base.version)


def _show_board(b: dict, as_json: bool) -> None:
    from sessions.boards import Dimensions, format_dimensions

    if as_json:
        _print_json(b)
        return
    dims = "-"
    if None not in (b["length_m"], b["width_m"], b["thickness_m"]):
        dims = format_dimensions(Dimensions(b["length_m"], b["width_m"], b["thickness_m"]))
    print(f"{b['name']}: {dims}, {_fmt(b['volume_l'], '.1f')} L, planform {_fmt(b['planform_area_m2'], '.3f')} m2, "
          f"{_fmt(b['mass_kg'], '.2f')} kg")
    extra = [f"{k} {b[k]}" for k in ("model", "version", "construction", "fins", "outline_source") if b.get(k)]
    if extra:
        print("  " + ", ".join(extra))
    if "sessions" in b:
        print(f"  {b['sessions']} session(s)")


def run_board_add(args) -> int:
    spec = _board_spec(args)
    with _open(args) as lib:
        _show_board(lib.add_board_spec(spec, note=args.note), args.json)
    return 0


def run_board_edit(args) -> int:
    with _open(args) as lib:
        base = lib.board_object(args.name)
        spec = _board_spec(args, base)
        from sessions.store.library import board_fields

        fields = board_fields(spec)
        if args.note is not None:
            fields["note"] = args.note
        _show_board(lib.edit_board(args.name, new_name=args.new_name, **fields), args.json)
    return 0


def run_board_list(args) -> int:
    from sessions.boards import Dimensions, format_dimensions

    with _open(args) as lib:
        boards = lib.boards()
    if args.json:
        _print_json(boards)
    elif not boards:
        print("no boards (add one with 'floatlift board add NAME --dims ... --volume 28.6L')")
    else:
        rows = []
        for b in boards:
            dims = "-"
            if None not in (b["length_m"], b["width_m"], b["thickness_m"]):
                dims = format_dimensions(Dimensions(b["length_m"], b["width_m"], b["thickness_m"]))
            rows.append([b["name"], dims, _fmt(b["volume_l"], ".1f"), _fmt(b["planform_area_m2"], ".3f"),
                         b["model"] or "-", b["version"] or "-", b["sessions"]])
        sys.stdout.write(_table(rows, ["board", "dimensions", "litres", "area m2", "model", "version", "sessions"]))
    return 0


def run_board_show(args) -> int:
    with _open(args) as lib:
        _show_board(lib.board(args.name), args.json)
    return 0


# --- demo --------------------------------------------------------------------------------------------
def run_demo(args) -> int:
    from sessions.store.db import demo_url
    from sessions.store.demo import build_demo_library, describe_demo

    summary = build_demo_library(args.db, workers=args.jobs)
    url = args.db or demo_url()
    if args.json:
        _print_json(summary)
    else:
        sys.stdout.write(describe_demo(summary))
    if not args.no_serve:
        serve = _dashboard_hook()
        if serve is not None:
            return int(serve(url) or 0)
        print("(the dashboard is not installed in this version; the library is ready for "
              "'floatlift list --db ...')")
    return 0


def _dashboard_hook():
    """The dashboard's entry point for the demo, when present: ``serve_demo(url) -> int``."""
    try:
        from dashboard import serve_demo  # type: ignore[attr-defined]
    except ImportError:
        return None
    return serve_demo
