"""The demo scenario: regenerates ``sample_tracks/`` deterministically.

Run ``python -m sessions.demo_scenario`` (optionally ``--out FOLDER``). It writes the
board catalogue (``boards.toml``), the manifest (``manifest.toml``), one simulated track
per session (``tracks/*.gpx.gz``) with its truth beside it (``*.truth.json.gz``) and
``README.md``. The same code always writes the same bytes.

Everything here is invented for the demo: the beach (Brannock Sands), the riders, the
boards and the shaper. The coordinates lie on a long straight open coast facing west.

Each session's true planing onset comes from :func:`sessions.simulate.board_onset_speed_mps`
with the board's planform area and the total load (rider, worn gear, board). The area is
integrated here from the catalogue's outline stations with the trapezoid rule
(``numpy.trapezoid``), so the scenario does not depend on the board parsers.
"""

from __future__ import annotations

import argparse
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy.interpolate import PchipInterpolator

from sessions.simulate import SimConfig, board_onset_speed_mps, simulate_session
from sessions.units import FT_M, IN_M

PROJECT_ROOT = Path(__file__).resolve().parent.parent
DEFAULT_OUT = PROJECT_ROOT / "sample_tracks"

PLACE = {
    "name": "Brannock Sands",
    "lat": 44.1302,
    "lon": -1.3121,
    "seaward_bearing_deg": 277.0,
    "note": "Invented beach for the demo: a straight sand beach on an open coast facing west, "
    "beach-break peaks 100-300 m out.",
}
SHAPER = "Yarrowby Shapes"
CAUTION = (
    "Demo data, simulated: every number is an estimate from a model. Choose boards and waves "
    "within your ability and follow local rules and lifeguards."
)


@dataclass(frozen=True)
class DemoRider:
    id: str
    name: str
    body_mass_kg: float
    gear_mass_kg: float
    stance: str
    ability: str
    note: str


@dataclass(frozen=True)
class DemoBoard:
    id: str
    name: str
    model: str
    version: str
    length_ftin: tuple[int, int]
    width_in: tuple[int, int, int]  # whole, numerator, denominator
    thickness_in: tuple[int, int, int]
    volume_l: float
    mass_kg: float
    construction: str
    fins: str
    nose_in: float  # width 12 in from the nose
    tail_in: float  # width 12 in from the tail
    wide_point_in: float  # wide point, inches forward (+) or back (-) of centre
    tail_end_in: float  # width at the tail end
    note: str

    @property
    def length_m(self) -> float:
        return self.length_ftin[0] * FT_M + self.length_ftin[1] * IN_M

    @property
    def width_m(self) -> float:
        w, n, d = self.width_in
        return (w + n / d) * IN_M

    def dimensions(self) -> str:
        def frac(t):
            w, n, d = t
            return f'{w} {n}/{d}"' if n else f'{w}"'

        ft, inch = self.length_ftin
        return f"{ft}'{inch}\" x {frac(self.width_in)} x {frac(self.thickness_in)}"

    def stations(self) -> list[tuple[float, float]]:
        """13 outline stations (from nose [m], full width [m]), mm-rounded."""
        length = self.length_m
        e = 12 * IN_M
        wide_x = 0.5 * length - self.wide_point_in * IN_M
        xs = [0.0, 0.03, e, wide_x, length - e, length]
        ws = [0.0, 0.35 * self.nose_in * IN_M, self.nose_in * IN_M, self.width_m, self.tail_in * IN_M,
              self.tail_end_in * IN_M]  # fmt: skip
        shape = PchipInterpolator(xs, ws)
        at = np.concatenate(([0.0, 0.03, e], np.linspace(e, length - e, 9)[1:-1], [wide_x, length - e, length]))
        at = np.unique(np.round(at, 3))
        return [(float(x), round(float(shape(x)), 3)) for x in at]

    def planform_area_m2(self) -> float:
        st = np.array(self.stations())
        return float(np.trapezoid(st[:, 1], st[:, 0]))


RIDERS = (
    DemoRider("maren", "Maren Quist", 58.0, 2.5, "regular", "advanced", "Light, quick; rides a small shortboard."),
    DemoRider("tobiah", "Tobiah Renn", 72.0, 3.0, "goofy", "advanced", "Test rider for the Whimbrel prototypes."),
    DemoRider("odile", "Odile Fearnley", 84.0, 3.5, "regular", "intermediate", "Mid-length trimmer."),
    DemoRider("bram", "Bram Ostrander", 95.0, 3.5, "regular", "improver", "Longboard; back in the water after years."),
)

BOARDS = (
    DemoBoard("sprig-510", "Sprig", "Sprig", "1", (5, 10), (19, 1, 4), (2, 7, 16), 28.6, 2.6, "PU",
              "thruster", 11.75, 14.5, -1.0, 9.0, "Everyday shortboard."),
    DemoBoard("ridgeback-66", "Ridgeback", "Ridgeback", "1", (6, 6), (19, 3, 4), (2, 5, 8), 35.4, 3.0,
              "PU", "thruster", 12.25, 14.0, 1.0, 7.5, "Step-up for overhead days, pulled-in tail."),
    DemoBoard("moorhen-72", "Moorhen", "Moorhen", "1", (7, 2), (21, 0, 1), (2, 3, 4), 46.0, 3.9, "EPS",
              "2+1", 16.0, 15.0, 0.0, 10.0, "Mid-length, full nose."),
    DemoBoard("longmere-92", "Longmere", "Longmere", "1", (9, 2), (22, 1, 2), (3, 0, 1), 72.0, 6.6, "PU",
              "single fin", 17.5, 15.0, 0.0, 11.0, "Classic longboard."),
    DemoBoard("whimbrel-v1", "Whimbrel v1", "Whimbrel", "v1", (6, 0), (19, 1, 4), (2, 9, 16), 31.0, 2.8,
              "PU", "thruster", 10.25, 12.5, -2.0, 5.0, "Prototype 1: narrow, pulled-in nose and tail."),
    DemoBoard("whimbrel-v2", "Whimbrel v2", "Whimbrel", "v2", (5, 10), (21, 1, 4), (2, 5, 16), 31.0, 2.8,
              "PU", "thruster", 15.75, 17.0, -0.5, 12.5, "Prototype 2: same litres, wider and fuller outline."),
)  # fmt: skip

# id, date, UTC start, rider, board, face m, period s, wind, tide, water C, sampling, minutes,
# extras (reported speed, elevation), feedback (paddling, catching, speed, control, note) or None
_SESSIONS = (
    ("s01", "2026-04-04", "07:10", "maren", "sprig-510", 1.0, 9, "light offshore (E)", "low, rising", 13.2, "1hz", 75, "", None),
    ("s02", "2026-04-04", "07:40", "bram", "longmere-92", 1.0, 9, "light offshore (E)", "low, rising", 13.2, "1hz", 90, "", None),
    ("s03", "2026-04-05", "08:05", "tobiah", "whimbrel-v1", 1.2, 10, "calm", "mid, rising", 13.4, "1hz", 80, "",
     (3, 3, 4, 4, "Sits low when paddling; fast once up; holds a line off the bottom.")),
    ("s04", "2026-04-05", "09:45", "tobiah", "whimbrel-v2", 1.2, 10, "calm", "high", 13.4, "1hz", 80, "",
     (4, 5, 4, 3, "Gets in early and easily; a little loose in the late turns.")),
    ("s05", "2026-04-08", "06:55", "odile", "moorhen-72", 0.8, 11, "light cross-shore (N)", "low", 13.5, "smart", 105, "", None),
    ("s06", "2026-04-08", "07:20", "maren", "sprig-510", 0.8, 11, "light cross-shore (N)", "low", 13.5, "1hz", 60, "", None),
    ("s07", "2026-04-11", "10:30", "tobiah", "ridgeback-66", 2.0, 14, "moderate offshore (E)", "mid, falling", 13.6, "1hz", 95, "speed", None),
    ("s08", "2026-04-11", "10:45", "maren", "sprig-510", 1.8, 14, "moderate offshore (E)", "mid, falling", 13.6, "5hz", 45, "", None),
    ("s09", "2026-04-12", "08:00", "tobiah", "whimbrel-v2", 1.4, 12, "light offshore (E)", "low, rising", 13.6, "1hz", 70, "",
     (4, 5, 4, 3, "Easy entries again; wants to go straight in the pocket.")),
    ("s10", "2026-04-12", "09:30", "tobiah", "whimbrel-v1", 1.4, 12, "light offshore (E)", "mid, rising", 13.6, "1hz", 70, "",
     (3, 3, 5, 4, "Needs a late, committed take-off but really drives through turns.")),
    ("s11", "2026-04-15", "16:20", "bram", "longmere-92", 0.6, 8, "light onshore (W)", "high", 13.9, "smart", 120, "", None),
    ("s12", "2026-04-15", "16:30", "odile", "moorhen-72", 0.6, 8, "light onshore (W)", "high", 13.9, "1hz", 90, "", None),
    ("s13", "2026-04-18", "07:00", "maren", "sprig-510", 1.5, 12, "calm", "low", 14.1, "1hz", 85, "elevation", None),
    ("s14", "2026-04-18", "07:15", "bram", "moorhen-72", 1.5, 12, "calm", "low", 14.1, "1hz", 80, "", None),
    ("s15", "2026-04-19", "08:10", "tobiah", "whimbrel-v1", 1.0, 10, "light cross-shore (S)", "mid, falling", 14.2, "1hz", 65, "",
     (3, 2, 4, 4, "Small day: hard work to get into waves.")),
    ("s16", "2026-04-19", "09:30", "tobiah", "whimbrel-v2", 1.0, 10, "light cross-shore (S)", "low", 14.2, "1hz", 65, "",
     (5, 5, 4, 4, "The better board on a small day.")),
    ("s17", "2026-04-23", "12:00", "odile", "moorhen-72", 1.2, 11, "light offshore (E)", "mid, rising", 14.4, "smart", 100, "speed", None),
    ("s18", "2026-04-25", "06:45", "maren", "sprig-510", 1.6, 13, "light offshore (E)", "low, rising", 14.5, "5hz", 45, "speed", None),
    ("s19", "2026-04-26", "07:30", "tobiah", "ridgeback-66", 1.7, 13, "light offshore (E)", "mid", 14.5, "1hz", 90, "", None),
    ("s20", "2026-04-29", "15:00", "bram", "longmere-92", 0.9, 9, "light onshore (W)", "high, falling", 14.8, "1hz", 100, "", None),
    ("s21", "2026-04-30", "08:20", "odile", "moorhen-72", 1.1, 10, "calm", "mid, rising", 14.9, "1hz", 75, "", None),
    ("s22", "2026-05-02", "07:30", "tobiah", "whimbrel-v1", 1.3, 11, "light offshore (E)", "low, rising", 15.0, "1hz", 60, "",
     (3, 3, 4, 5, "Late but solid entries; best board for the steeper sets.")),
    ("s23", "2026-05-02", "08:50", "tobiah", "whimbrel-v2", 1.3, 11, "light offshore (E)", "mid, rising", 15.0, "1hz", 60, "",
     (4, 4, 4, 3, "Into waves early; the rail feels soft in hard turns.")),
    ("s24", "2026-05-06", "17:10", "tobiah", "whimbrel-v2", 0.9, 9, "light onshore (W)", "high", 15.3, "1hz", 55, "",
     (5, 5, 3, 4, "Kept catching waves when the others struggled.")),
    ("s25", "2026-05-06", "18:20", "tobiah", "whimbrel-v1", 0.9, 9, "light onshore (W)", "high, falling", 15.3, "1hz", 55, "",
     (3, 2, 3, 4, "Slow, small evening waves: few good entries.")),
)  # fmt: skip

#: Share of attempts that become rides, by ability (model choice for the demo).
_CATCH_RATE = {"beginner": 0.35, "improver": 0.45, "intermediate": 0.6, "advanced": 0.72, "expert": 0.8}
_LONG_STYLE_BOARDS = {"longmere-92", "moorhen-72"}


def _toml_str(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _num(v: float) -> str:
    return repr(float(v)) if not float(v).is_integer() else f"{float(v):.1f}"


def _board_toml(boards) -> str:
    out = [
        "# Board catalogue of the demo scenario (invented boards). Regenerate with",
        "# `python -m sessions.demo_scenario`. Dimensions and volume in the trade's notation;",
        "# outline stations: [distance from the nose tip in m, full width in m].",
        'format = "floatlift.boards/1"',
        _kv("title", "Demo boards at Brannock Sands"),
        "",
    ]
    for b in boards:
        out.append(f"[boards.{b.id}]")
        out.append(_kv("name", b.name))
        out.append(_kv("model", b.model))
        out.append(_kv("version", b.version))
        out.append(_kv("shaper", SHAPER))
        out.append(_kv("dimensions", b.dimensions()))
        out.append(_kv("volume", f"{b.volume_l:.1f} L"))
        out.append(f"mass_kg = {_num(b.mass_kg)}")
        out.append(_kv("construction", b.construction))
        out.append(_kv("fins", b.fins))
        stations = ", ".join(f"[{x:.3f}, {w:.3f}]" for x, w in b.stations())
        out.append(f"outline = [{stations}]")
        out.append(_kv("note", b.note))
        out.append("")
    return "\n".join(out)


def _kv(key: str, value: str) -> str:
    return f"{key} = {_toml_str(value)}"


def _onset(board: DemoBoard, rider: DemoRider) -> float:
    total = rider.body_mass_kg + rider.gear_mass_kg + board.mass_kg
    return board_onset_speed_mps(board.planform_area_m2(), total)


def build(out_dir: Path = DEFAULT_OUT, *, quiet: bool = False) -> list[dict]:
    """Write the whole scenario into ``out_dir``; returns one summary dict per session."""
    out_dir = Path(out_dir)
    tracks = out_dir / "tracks"
    tracks.mkdir(parents=True, exist_ok=True)
    riders = {r.id: r for r in RIDERS}
    boards = {b.id: b for b in BOARDS}
    (out_dir / "boards.toml").write_text(_board_toml(BOARDS), encoding="utf-8")

    man = [
        "# Manifest of the demo scenario (all invented). Regenerate with",
        "# `python -m sessions.demo_scenario`. Paths are relative to this file.",
        f"# {CAUTION}",
        'format = "floatlift.manifest/1"',
        _kv("title", "Four riders, six boards, April at Brannock Sands"),
        'board_catalogue = "boards.toml"',
        "",
        "[place]",
        _kv("name", PLACE["name"]),
        f"lat = {PLACE['lat']}",
        f"lon = {PLACE['lon']}",
        f"seaward_bearing_deg = {PLACE['seaward_bearing_deg']}",
        _kv("note", PLACE["note"]),
        "",
    ]
    for r in RIDERS:
        man += [
            f"[riders.{r.id}]",
            _kv("name", r.name),
            f"body_mass_kg = {_num(r.body_mass_kg)}",
            f"gear_mass_kg = {_num(r.gear_mass_kg)}",
            _kv("stance", r.stance),
            _kv("ability", r.ability),
            _kv("note", r.note),
            "",
        ]
    summary = []
    for k, row in enumerate(_SESSIONS):
        sid, day, hhmm, rid, bid, face, period, wind, tide, temp, sampling, minutes, extras, fb = row
        rider, board = riders[rid], boards[bid]
        onset = _onset(board, rider)
        style = "long" if bid in _LONG_STYLE_BOARDS else "short"
        cfg = SimConfig(
            seed=20260400 + k,
            sampling=sampling,
            duration_s=minutes * 60.0,
            board_onset_mps=round(onset, 3),
            style=style,
            wave_face_m=face,
            wave_period_s=float(period),
            reported_speed="speed" in extras,
            elevation="elevation" in extras,
            start=f"{day}T{hhmm}:00Z",
            origin_lat=PLACE["lat"],
            origin_lon=PLACE["lon"],
            seaward_bearing_deg=PLACE["seaward_bearing_deg"],
            catch_rate=_CATCH_RATE[rider.ability],
            mean_wait_s=110.0,
            decimals=6,
            name=f"{PLACE['name']} {day}, {rider.name} on {board.name}",
        )
        sim = simulate_session(cfg)
        stem = f"{day}_{hhmm.replace(':', '')}_{rid}_{bid}"
        track_path, truth_path = sim.write(tracks / f"{stem}.gpx.gz", truth_gzip=True)
        man += [
            "[[sessions]]",
            _kv("id", sid),
            _kv("file", f"tracks/{track_path.name}"),
            _kv("truth", f"tracks/{truth_path.name}"),
            _kv("rider", rid),
            _kv("board", bid),
        ]
        if board.model == "Whimbrel":
            man.append(_kv("series", "Whimbrel prototype test"))
        man += [
            "[sessions.conditions]",
            f"wave_face_m = {_num(face)}",
            f"wave_period_s = {_num(period)}",
            _kv("wind", wind),
            _kv("tide", tide),
            'water = "sea"',
            f"water_temp_c = {_num(temp)}",
            "salinity_g_kg = 35.2",
        ]
        if fb is not None:
            man += [
                "[sessions.feedback]",
                f"paddling = {fb[0]}",
                f"catching = {fb[1]}",
                f"speed = {fb[2]}",
                f"control = {fb[3]}",
                _kv("note", fb[4]),
            ]
        man.append("")
        tot = sim.truth["totals"]
        summary.append(
            {
                "id": sid, "date": day, "start": hhmm, "rider": rider.name, "board": board.name,
                "face_m": face, "sampling": sampling, "minutes": round(tot["duration_s"] / 60.0),
                "onset_mps": onset, "rides": tot["rides"], "missed": tot["missed_waves"],
                "extras": extras, "fixes": len(sim.points),
            }
        )  # fmt: skip
        if not quiet:
            print(f"wrote {track_path.relative_to(out_dir)} ({len(sim.points)} fixes, {tot['rides']} rides)")
    (out_dir / "manifest.toml").write_text("\n".join(man), encoding="utf-8")
    (out_dir / "README.md").write_text(_readme(summary), encoding="utf-8")
    if not quiet:
        print(f"wrote {out_dir.name}/manifest.toml, boards.toml and README.md")
    return summary


def _readme(summary: list[dict]) -> str:
    riders = {r.id: r for r in RIDERS}
    lines = [
        "# Sample tracks: a month at Brannock Sands (invented)",
        "",
        f"> {CAUTION}",
        "",
        "Everything in this folder is simulated by `sessions/simulate.py` and written by",
        "`python -m sessions.demo_scenario` (deterministic: running it again writes the same",
        "bytes). The beach, riders, boards and shaper are invented.",
        "",
        "## The place",
        "",
        f"{PLACE['name']} is an invented straight sand beach on an open coast facing west",
        f"(seaward bearing {PLACE['seaward_bearing_deg']:g} deg; shore origin {PLACE['lat']} N,",
        f"{abs(PLACE['lon'])} W). Peaks break 100-300 m out; a weak current drifts along the shore.",
        "",
        "## The riders",
        "",
        "| id | name | body kg | gear kg | stance | ability | note |",
        "|---|---|---|---|---|---|---|",
    ]
    for r in RIDERS:
        lines.append(
            f"| {r.id} | {r.name} | {r.body_mass_kg:g} | {r.gear_mass_kg:g} | {r.stance} | {r.ability} | {r.note} |"
        )
    lines += [
        "",
        f"## The boards (`boards.toml`; shaper: {SHAPER})",
        "",
        "| id | dimensions | volume | mass kg | build | fins | planform area m^2 | note |",
        "|---|---|---|---|---|---|---|---|",
    ]
    for b in BOARDS:
        lines.append(
            f"| {b.id} | `{b.dimensions()}` | {b.volume_l:.1f} L | {b.mass_kg:g} | {b.construction} | {b.fins} "
            f"| {b.planform_area_m2():.3f} | {b.note} |"
        )
    v1 = next(b for b in BOARDS if b.id == "whimbrel-v1")
    v2 = next(b for b in BOARDS if b.id == "whimbrel-v2")
    t = riders["tobiah"]
    lines += [
        "",
        "The Whimbrel prototypes have the same volume (31.0 L) but different outlines: v2 is",
        f"wider with a fuller nose and tail, so its planform area is {v2.planform_area_m2():.3f} m^2",
        f"against {v1.planform_area_m2():.3f} m^2. With the test rider's load the simulator's true",
        f"onset speeds are {_onset(v1, t):.2f} m/s (v1) and {_onset(v2, t):.2f} m/s (v2): the test",
        "sessions should show v2 planing earlier.",
        "",
        "## How the true onset speed is set",
        "",
        "Each session's board onset speed is `sessions.simulate.board_onset_speed_mps(area, load)`:",
        "dynamic lift `0.5 rho v^2 A C_L` carrying half of the weight of rider, worn gear and",
        "board (`C_L = 0.14`, a model choice). The area is the trapezoid integral of the outline",
        "stations in `boards.toml`. Each ride draws its own onset around that value",
        "(spread 0.25 m/s). The truth of every ride is in the track's `.truth.json.gz`.",
        "",
        "## The sessions (`manifest.toml`)",
        "",
        "| id | date | UTC | rider | board | face m | sampling | min | rides | missed | true onset m/s | extras |",
        "|---|---|---|---|---|---|---|---|---|---|---|---|",
    ]
    for s in summary:
        extras = {"speed": "device speed", "elevation": "elevation", "": ""}[s["extras"]]
        lines.append(
            f"| {s['id']} | {s['date']} | {s['start']} | {s['rider']} | {s['board']} | {s['face_m']:g} "
            f"| {s['sampling']} | {s['minutes']} | {s['rides']} | {s['missed']} | {s['onset_mps']:.2f} | {extras} |"
        )
    lines += [
        "",
        "What the sessions show: the Whimbrel test (s03, s04, s09, s10, s15, s16, s22-s25, with the",
        "test rider's scores in the manifest) in small, medium and head-high surf; the same",
        "rider on three boards; four riders from 58 to 95 kg; a big day (s07, s08); small",
        "onshore days (s11, s12); sampling every second, at 5 Hz (s08, s18) and in the",
        "irregular battery-saving mode (s05, s11, s17); device speed (s07, s17, s18) and",
        "elevation (s13). All tracks carry GPS noise, rare outlier jumps and dropouts.",
        "",
        "## Files",
        "",
        "- `manifest.toml`: place, riders, sessions (track, truth, rider, board, conditions,",
        "  test feedback); read it with `sessions.manifest.read_manifest`.",
        "- `boards.toml`: the board catalogue.",
        "- `tracks/<date>_<time>_<rider>_<board>.gpx.gz`: GPX 1.1, gzip-compressed, 6 decimals.",
        "- `tracks/...truth.json.gz`: the truth (schema `floatlift.truth/1`, see",
        "  `docs/simulator.md`).",
        "",
        "Regenerate: `python -m sessions.demo_scenario` (about two seconds).",
        "",
    ]
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m sessions.demo_scenario", description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=DEFAULT_OUT, help="folder to write (default: sample_tracks/)")
    parser.add_argument("-q", "--quiet", action="store_true")
    args = parser.parse_args(argv)
    build(args.out, quiet=args.quiet)
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
